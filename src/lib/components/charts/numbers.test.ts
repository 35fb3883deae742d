import { describe, expect, test } from 'vitest';
import { sig4, withUnit } from './numbers';

describe('sig4: four significant digits', () => {
	test.each([
		[26.49123, '26.49'],
		[0.0756312, '0.07563'],
		[2.5, '2.5'],
		[1234.56, '1235'],
		[-0.37824, '-0.3782'],
		[0, '0'],
		[1.23456e-7, '1.235e-7'],
		[Number.NaN, '—'],
		[Infinity, '—'],
		[null, '—'],
		[undefined, '—']
	])('%s → %s', (v, out) => {
		expect(sig4(v)).toBe(out);
	});

	test('units follow the value; unitless values (the ratio) stay bare', () => {
		expect(withUnit(26.491, 'pF')).toBe('26.49 pF');
		expect(withUnit(2.1349, '')).toBe('2.135');
		expect(withUnit(null, 'pF')).toBe('—');
	});
});
