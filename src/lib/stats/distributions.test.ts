import { describe, expect, test } from 'vitest';
import { chiSquareQuantile, fUpperTail, normalCdf, normalQuantile, tQuantile } from './distributions';

// Reference values: NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7
// (tables of critical values): 1.3.6.7.1 normal, 1.3.6.7.2 t, 1.3.6.7.3 F (alpha = 0.05),
// 1.3.6.7.4 chi-square. Printed to 3 decimals.
describe('distribution quantiles against NIST/SEMATECH e-Handbook 1.3.6.7 tables', () => {
	test.each([
		[0.975, 1.96],
		[0.95, 1.645]
	])('normal quantile %f = %f (1.3.6.7.1)', (p, z) => {
		expect(normalQuantile(p)).toBeCloseTo(z, 3);
	});
	test.each([
		[0.975, 10, 2.228],
		[0.975, 30, 2.042],
		[0.95, 5, 2.015]
	])('t quantile p=%f df=%i = %f (1.3.6.7.2)', (p, df, t) => {
		expect(tQuantile(p, df)).toBeCloseTo(t, 3);
	});
	test.each([
		[0.95, 10, 18.307],
		[0.05, 10, 3.94],
		[0.975, 29, 45.722]
	])('chi-square quantile p=%f df=%i = %f (1.3.6.7.4)', (p, df, x) => {
		expect(chiSquareQuantile(p, df)).toBeCloseTo(x, 2);
	});
	test('F upper 5 % point for (4, 10) df is 3.478 (1.3.6.7.3)', () => {
		expect(fUpperTail(3.478, 4, 10)).toBeCloseTo(0.05, 4);
	});
	test('normal CDF at 0 is one half (symmetry)', () => {
		expect(normalCdf(0)).toBe(0.5);
	});
	test('out-of-domain arguments give NaN, not a throw', () => {
		expect(tQuantile(1.5, 3)).toBeNaN();
		expect(chiSquareQuantile(0.5, -1)).toBeNaN();
		expect(fUpperTail(Number.NaN, 1, 1)).toBeNaN();
	});
});
