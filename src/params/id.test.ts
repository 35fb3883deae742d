import { describe, expect, test } from 'vitest';
import { match } from './id';

describe('id route matcher', () => {
	test.each([
		['1', true],
		['42', true],
		['0', false],
		['-1', false],
		['01', false],
		['1e3', false],
		['abc', false],
		['', false],
		['12345678901234567', false]
	])('%j → %s', (param, ok) => {
		expect(match(param)).toBe(ok);
	});
});
