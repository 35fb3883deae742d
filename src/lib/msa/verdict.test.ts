import { describe, expect, test } from 'vitest';
import { grrBand, judgeStudy, numberOfDistinctCategories, resolveStudyOptions } from './verdict';

// Acceptance bands: common practice (%GRR < 10 % acceptable, 10-30 % conditional, > 30 % not
// acceptable; ndc >= 5). The closed treatment of exactly 10 % and 30 % is the project's choice.
describe('grrBand (common practice)', () => {
	test.each([
		[0, 'acceptable'],
		[9.999, 'acceptable'],
		[10, 'conditional'],
		[18.97, 'conditional'],
		[30, 'conditional'],
		[30.0001, 'not-acceptable'],
		[250, 'not-acceptable']
	] as const)('%f %% -> %s', (pct, band) => {
		expect(grrBand(pct)).toBe(band);
	});
});

// ndc rule as documented for the SixSigma package (ss.rr): max(1, floor(1.41 sd_part / sd_GRR)),
// see shared/reference/msa/gauge-rr-examples.json, examples 1 and 2, method.ndc_rule; the
// ratios below are plain arithmetic.
describe('numberOfDistinctCategories', () => {
	test.each([
		// Houf & Berman: 1.41 x 6.9492872 / 1.3430204 = 7.30 -> 7 (JASP ch. 10.1, ss.rr output).
		[6.9492872, 1.3430204, 7],
		// Paper helicopter: 1.41 x 0.25365123 / 0.14792656 = 2.42 -> 2 (ss.rr docs).
		[0.25365123, 0.14792656, 2],
		// 1.41 x 0.1 / 1 = 0.141 -> floor 0, raised to 1.
		[0.1, 1, 1],
		// Exactly 5: 1.41 x 5 / 1.41 must not truncate to 4 through rounding error.
		[5, 1.41, 5],
		[0, 1, 1]
	])('sd_part %f, sd_GRR %f -> %i', (part, grr, ndc) => {
		expect(numberOfDistinctCategories(part, grr)).toBe(ndc);
	});
	test('GRR of zero gives null, not Infinity', () => {
		expect(numberOfDistinctCategories(1, 0)).toBeNull();
	});
});

describe('judgeStudy combines the bands (common practice)', () => {
	test.each([
		[5, null, 8, 'acceptable', true],
		[5, 12, 8, 'conditional', true],
		[5, 40, 8, 'not-acceptable', true],
		[5, null, 4, 'not-acceptable', false],
		[20, null, 5, 'conditional', true],
		[5, null, null, 'indeterminate', null]
	] as const)('study %f %%, tolerance %s %%, ndc %s -> %s', (sv, tol, ndc, overall, ndcOk) => {
		const v = judgeStudy(sv, tol, ndc);
		expect(v.overall).toBe(overall);
		expect(v.ndcAdequate).toBe(ndcOk);
		expect(v.judgements).toHaveLength(tol === null ? 1 : 2);
		expect(v.reasons.length).toBeGreaterThan(0);
	});
});

describe('resolveStudyOptions', () => {
	test('defaults: multiplier 6, no tolerance', () => {
		expect(resolveStudyOptions({})).toEqual({ multiplier: 6, tolerance: null });
	});
	test('tolerance is usl - lsl', () => {
		expect(resolveStudyOptions({ spec: { lsl: 0.7, usl: 1.8 }, studyVariationMultiplier: 5.15 })).toEqual({
			multiplier: 5.15,
			tolerance: 1.8 - 0.7
		});
	});
	test.each([
		[{ studyVariationMultiplier: Number.POSITIVE_INFINITY }],
		[{ studyVariationMultiplier: 0 }],
		[{ spec: { lsl: 0, usl: Number.NaN } }],
		[{ spec: { lsl: 3, usl: 3 } }]
	])('invalid %o', (options) => {
		expect(resolveStudyOptions(options)).toMatchObject({ code: 'invalid-option' });
	});
});
