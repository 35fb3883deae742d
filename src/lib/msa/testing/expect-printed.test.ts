import { describe, expect, test } from 'vitest';
import { expectPrinted, nonFiniteNumbers } from './expect-printed';

// The comparison helper is itself checked, so a wrong value cannot pass as "printed precision".
// Cases are plain rounding arithmetic (half a unit in the last printed digit).
describe('expectPrinted rounds to the printed precision', () => {
	test.each([
		[2.292e-15, 2.29e-15],
		[162.2702703, 162.27],
		[3935.955556, 3936],
		[0.00480960888, 0.00481],
		[48.51111, 49]
	])('%f prints as %f', (actual, printed) => {
		expect(() => expectPrinted(actual, printed)).not.toThrow();
	});
	test.each([
		[2.331e-15, 2.29e-15],
		[162.276, 162.27],
		[3935.4, 3936],
		[0.004816, 0.00481],
		[Number.NaN, 1]
	])('%f does not print as %f', (actual, printed) => {
		expect(() => expectPrinted(actual, printed)).toThrow();
	});
	test('null is rejected', () => {
		expect(() => expectPrinted(null, 1)).toThrow();
	});
});

describe('nonFiniteNumbers finds NaN and Infinity anywhere', () => {
	test('nested', () => {
		expect(nonFiniteNumbers({ a: [1, { b: Number.NaN }], c: Infinity, d: null, e: 'x' })).toEqual([
			'$.a[1].b',
			'$.c'
		]);
	});
});
