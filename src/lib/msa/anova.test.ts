import { describe, expect, test } from 'vitest';
import { fUpperTail, fUpperTailAccurate } from '../stats/distributions';
import { gaugeRrAnova, type GaugeRrAnova } from './anova';
import { loadExample, num } from './testing/reference-fixtures';
import { expectPrinted, nonFiniteNumbers } from './testing/expect-printed';
import type { MsaRow } from './types';

function analyse(rows: MsaRow[], options: Parameters<typeof gaugeRrAnova>[1] = {}): GaugeRrAnova {
	const result = gaugeRrAnova(rows, options);
	if (!result.ok) throw new Error(`unexpected error ${result.error.code}: ${result.error.message}`);
	expect(nonFiniteNumbers(result.value)).toEqual([]);
	return result.value;
}

type EffectKey = 'part' | 'appraiser' | 'partXAppraiser';
const refEffect: Record<EffectKey, string> = {
	part: 'part',
	appraiser: 'operator',
	partXAppraiser: 'part_x_operator'
};
type ComponentKey = 'totalGrr' | 'repeatability' | 'reproducibility' | 'appraiser' | 'partXAppraiser' | 'partToPart' | 'total';
const refComponent: Record<ComponentKey, string> = {
	totalGrr: 'total_grr',
	repeatability: 'repeatability',
	reproducibility: 'reproducibility',
	appraiser: 'operator',
	partXAppraiser: 'part_x_operator',
	partToPart: 'part_to_part',
	total: 'total'
};

// Reference: Houf & Berman (1988) thermal impedance data, 10 parts x 3 operators x 3 trials;
// published results from the JASP Verification Project ch. 10.1 (section 10.1.6, SixSigma ss.rr
// output; section 10.1.3 'By Hand'), https://jasp-stats.github.io/jasp-verification-project/type-2-3-gauge-rr-study.html
// data: shared/reference/msa/gauge-rr-examples.json (copied to tests/reference/msa/).
describe('Houf & Berman (1988) thermal impedance, full model with interaction (JASP ch. 10.1)', () => {
	const { example, rows } = loadExample('houf-berman-1988-thermal-impedance');
	const pub = example.published_results;
	const out = analyse(rows);
	const table = ['sixsigma_ss_rr_output', 'anova_complete_model_as_printed'];

	test('interaction p = 5.06e-07 <= 0.05, so it is kept and no reduced table is made', () => {
		expect(out.interactionPooled).toBe(false);
		expect(out.reduced).toBeNull();
		expect(out.full.mainEffectDenominator).toBe('interaction');
	});

	test.each<EffectKey>(['part', 'appraiser', 'partXAppraiser'])(
		'ANOVA row %s: df, SS (printed as integers), MS, F, p as printed by ss.rr',
		(key) => {
			const row = out.full[key];
			const src = refEffect[key];
			expect(row.df).toBe(num(pub, ...table, src, 'df'));
			expectPrinted(row.ss, num(pub, ...table, src, 'ss'), 'ss');
			expectPrinted(row.ms, num(pub, ...table, src, 'ms'), 'ms');
			expectPrinted(row.f, num(pub, ...table, src, 'F'), 'F');
			expectPrinted(row.p, num(pub, ...table, src, 'p'), 'p');
		}
	);

	test('repeatability and total rows as printed by ss.rr', () => {
		expect(out.full.repeatability.df).toBe(num(pub, ...table, 'repeatability', 'df'));
		expectPrinted(out.full.repeatability.ss, num(pub, ...table, 'repeatability', 'ss'));
		expectPrinted(out.full.repeatability.ms, num(pub, ...table, 'repeatability', 'ms'));
		expect(out.full.total.df).toBe(num(pub, ...table, 'total', 'df'));
		expectPrinted(out.full.total.ss, num(pub, ...table, 'total', 'ss'));
	});

	test.each<ComponentKey>(['totalGrr', 'repeatability', 'reproducibility', 'appraiser', 'partXAppraiser', 'partToPart', 'total'])(
		'variance component %s: VarComp, %%Contribution, StdDev, StudyVar (6 sigma), %%StudyVar (ss.rr and By Hand)',
		(key) => {
			const c = out.components[key];
			if (c === null) throw new Error('component missing');
			const src = refComponent[key];
			const vc = ['sixsigma_ss_rr_output', 'variance_components', src];
			expectPrinted(c.variance, num(pub, ...vc, 'varcomp'), 'varcomp');
			expectPrinted(c.pctContribution, num(pub, ...vc, 'pct_contribution'), '%contribution');
			expectPrinted(c.stdDev, num(pub, ...vc, 'stddev'), 'stddev');
			expectPrinted(c.studyVariation, num(pub, ...vc, 'study_var'), 'study var');
			expectPrinted(c.pctStudyVariation, num(pub, ...vc, 'pct_study_var'), '%study var');
			// 'By Hand' section 10.1.3 prints % contribution to 6 decimals.
			expectPrinted(c.pctContribution, num(pub, 'variance_components_by_hand', 'pct_contribution', src));
			expectPrinted(c.variance, num(pub, 'variance_components_by_hand', 'variance', src));
			expect(c.truncatedAtZero).toBe(false);
			expect(c.pctTolerance).toBeNull();
		}
	);

	test('ndc = 7 (ss.rr: max(1, floor(1.41 sd_part / sd_GRR)))', () => {
		expect(out.ndc).toBe(num(pub, 'sixsigma_ss_rr_output', 'ndc'));
	});

	test('verdict: %GRR 18.97 % of study variation is conditional, ndc 7 >= 5 (bands: common practice)', () => {
		expect(out.verdict.judgements).toHaveLength(1);
		expect(out.verdict.judgements[0]?.band).toBe('conditional');
		expect(out.verdict.ndcAdequate).toBe(true);
		expect(out.verdict.overall).toBe('conditional');
	});

	test('5.15 sigma multiplier: StudyVar = 5.15 x published StdDev, %StudyVar unchanged (ratio)', () => {
		const o515 = analyse(rows, { studyVariationMultiplier: 5.15 });
		const vc = ['sixsigma_ss_rr_output', 'variance_components', 'total_grr'];
		expect(o515.components.totalGrr.studyVariation).toBeCloseTo(5.15 * num(pub, ...vc, 'stddev'), 6);
		expectPrinted(o515.components.totalGrr.pctStudyVariation, num(pub, ...vc, 'pct_study_var'));
		expect(o515.ndc).toBe(7);
	});

	// Not published: the reference file's computed_check (an independent python3 ANOVA written by
	// whoever assembled the reference data) gives F for the main effects against repeatability.
	test('F against MS_repeatability option vs the reference file computed_check (recomputation, not published)', () => {
		const alt = analyse(rows, { mainEffectDenominator: 'repeatability' });
		const cc = example.computed_check;
		const ref = ['F_main_effects_against_repeatability_for_reference'];
		expect(alt.full.part.f).toBeCloseTo(num(cc, ...ref, 'part'), 5);
		expect(alt.full.appraiser.f).toBeCloseTo(num(cc, ...ref, 'operator'), 6);
		expect((alt.full.part.p ?? 0) / num(cc, ...ref, 'p_part')).toBeCloseTo(1, 6);
		expect((alt.full.appraiser.p ?? 0) / num(cc, ...ref, 'p_operator')).toBeCloseTo(1, 6);
		expect(alt.full.mainEffectDenominator).toBe('repeatability');
		// The denominator of the main-effect tests does not enter the variance components.
		expect(alt.components.totalGrr.variance).toBeCloseTo(out.components.totalGrr.variance, 12);
	});
});

// Reference: SixSigma R package, ss.rr reference page (version 0.11.0), example on ss.data.rr
// (paper helicopter, time1), https://emilopezcano.github.io/SixSigma/reference/ss.rr.html, and
// the package unit test tests/testthat/test-ss-rr.R (tolerance 0.1);
// data: shared/reference/msa/gauge-rr-examples.json (copied to tests/reference/msa/).
describe('SixSigma ss.data.rr paper helicopter, interaction pooled at alpha 0.05 (ss.rr docs)', () => {
	const { example, rows } = loadExample('sixsigma-ss-data-rr-paper-helicopter');
	const pub = example.published_results;
	const out = analyse(rows, { spec: { lsl: 0.7, usl: 1.8 } });

	test('interaction p = 0.44619 > 0.05, so it is pooled and the reduced table is reported', () => {
		expect(out.interactionPooled).toBe(true);
		expect(out.reduced).not.toBeNull();
		expect(out.components.partXAppraiser).toBeNull();
	});

	test.each<EffectKey>(['part', 'appraiser', 'partXAppraiser'])('complete model row %s as published', (key) => {
		const row = out.full[key];
		const src = ['anova_complete_model', refEffect[key]];
		expect(row.df).toBe(num(pub, ...src, 'df'));
		expectPrinted(row.ss, num(pub, ...src, 'ss'), 'ss');
		expectPrinted(row.ms, num(pub, ...src, 'ms'), 'ms');
		expectPrinted(row.f, num(pub, ...src, 'F'), 'F');
		expectPrinted(row.p, num(pub, ...src, 'p'), 'p');
	});

	test('complete model repeatability and total rows as published', () => {
		const src = ['anova_complete_model'];
		expect(out.full.repeatability.df).toBe(num(pub, ...src, 'repeatability', 'df'));
		expectPrinted(out.full.repeatability.ss, num(pub, ...src, 'repeatability', 'ss'));
		expectPrinted(out.full.repeatability.ms, num(pub, ...src, 'repeatability', 'ms'));
		expect(out.full.total.df).toBe(num(pub, ...src, 'total', 'df'));
		expectPrinted(out.full.total.ss, num(pub, ...src, 'total', 'ss'));
	});

	test.each<'part' | 'appraiser'>(['part', 'appraiser'])('reduced model row %s as published', (key) => {
		const row = out.reduced?.[key];
		const src = ['anova_reduced_model', refEffect[key]];
		expect(row?.df).toBe(num(pub, ...src, 'df'));
		expectPrinted(row?.ss, num(pub, ...src, 'ss'), 'ss');
		expectPrinted(row?.ms, num(pub, ...src, 'ms'), 'ms');
		expectPrinted(row?.f, num(pub, ...src, 'F'), 'F');
		expectPrinted(row?.p, num(pub, ...src, 'p'), 'p');
	});

	test('reduced model pooled repeatability (22 df) and total as published', () => {
		const src = ['anova_reduced_model'];
		expect(out.reduced?.repeatability.df).toBe(num(pub, ...src, 'repeatability', 'df'));
		expectPrinted(out.reduced?.repeatability.ss, num(pub, ...src, 'repeatability', 'ss'));
		expectPrinted(out.reduced?.repeatability.ms, num(pub, ...src, 'repeatability', 'ms'));
		expect(out.reduced?.total.df).toBe(num(pub, ...src, 'total', 'df'));
		expectPrinted(out.reduced?.total.ss, num(pub, ...src, 'total', 'ss'));
	});

	const pooledKeys: Exclude<ComponentKey, 'partXAppraiser'>[] = [
		'totalGrr',
		'repeatability',
		'reproducibility',
		'appraiser',
		'partToPart',
		'total'
	];
	test.each(pooledKeys)('variance component %s with tolerance 1.1 (usl 1.8, lsl 0.7) as published', (key) => {
		const c = out.components[key];
		const vc = ['variance_components', refComponent[key]];
		expectPrinted(c.variance, num(pub, ...vc, 'varcomp'), 'varcomp');
		expectPrinted(c.pctContribution, num(pub, ...vc, 'pct_contribution'), '%contribution');
		expectPrinted(c.stdDev, num(pub, ...vc, 'stddev'), 'stddev');
		expectPrinted(c.studyVariation, num(pub, ...vc, 'study_var'), 'study var');
		expectPrinted(c.pctStudyVariation, num(pub, ...vc, 'pct_study_var'), '%study var');
		expectPrinted(c.pctTolerance, num(pub, ...vc, 'pct_tolerance'), '%tolerance');
	});

	test.each(pooledKeys)('%%Tolerance of %s with tolerance 0.1 (usl 0.8, package unit test)', (key) => {
		const narrow = analyse(rows, { spec: { lsl: 0.7, usl: 0.8 } });
		expectPrinted(
			narrow.components[key].pctTolerance,
			num(pub, 'unit_test_variant', 'pct_tolerance', refComponent[key])
		);
	});

	test('ndc = 2 as published', () => {
		expect(out.ndc).toBe(num(pub, 'ndc'));
	});

	test('verdict: %GRR 50.38 % of study variation and 80.69 % of tolerance, ndc 2: not acceptable (common practice)', () => {
		expect(out.verdict.judgements.map((j) => [j.basis, j.band])).toEqual([
			['study-variation', 'not-acceptable'],
			['tolerance', 'not-acceptable']
		]);
		expect(out.verdict.ndcAdequate).toBe(false);
		expect(out.verdict.overall).toBe('not-acceptable');
	});

	// Hand check from the published complete table: MS_PO 0.0208 < MS_E 0.0214, so the
	// interaction moment estimate (MS_PO - MS_E)/r is negative and must be reported as 0.
	test('alpha 0.5 keeps the interaction (p 0.446 <= 0.5); its negative estimate is set to 0', () => {
		const kept = analyse(rows, { alpha: 0.5 });
		expect(kept.interactionPooled).toBe(false);
		expect(kept.reduced).toBeNull();
		expect(kept.components.partXAppraiser?.variance).toBe(0);
		expect(kept.components.partXAppraiser?.truncatedAtZero).toBe(true);
		// Repeatability is then MS_E of the complete table (published 0.0214).
		expectPrinted(kept.components.repeatability.variance, num(pub, 'anova_complete_model', 'repeatability', 'ms'));
	});
});

// Independent hand computation (written out here from the definitions of the balanced two-way
// ANOVA): 2 parts x 2 appraisers x 2 trials with cells P1A1 {1,3}, P1A2 {5,7}, P2A1 {7,9},
// P2A2 {3,5}. Grand mean 5; part means 4, 6; appraiser means 5, 5; interaction residuals
// -2, 2, 2, -2. SS_P = 2*2*(1+1) = 8, SS_O = 0, SS_PO = 2*16 = 32, SS_E = 8, SS_T = 48.
// MS_P = 8, MS_O = 0, MS_PO = 32, MS_E = 2. F_PO = 16 on (1, 4); F_P = 0.25 on (1, 1).
// p for F(1, 1) = 0.25: P(|Cauchy| > 0.5) = 1 - (2/pi) atan(0.5) (closed form of the t
// distribution with 1 df). p for F(1, 4) = 16: two-sided t(4) tail at t = 4, closed form
// F(t) = 1/2 + (3/8) u (1 - t^2 / (12 (1 + t^2/4))), u = t / sqrt(1 + t^2/4) (recalled from memory).
// Variance components: part (8 - 32)/4 < 0 -> 0, appraiser (0 - 32)/4 < 0 -> 0,
// interaction (32 - 2)/2 = 15, repeatability 2.
describe('hand-computed 2 x 2 x 2 design with negative moment estimates', () => {
	const cells: [string, string, number[]][] = [
		['P1', 'A1', [1, 3]],
		['P1', 'A2', [5, 7]],
		['P2', 'A1', [7, 9]],
		['P2', 'A2', [3, 5]]
	];
	const rows: MsaRow[] = cells.flatMap(([part, appraiser, vs]) =>
		vs.map((value, i) => ({ part, appraiser, trial: i + 1, value }))
	);
	const out = analyse(rows);
	const t = 4;
	const u = t / Math.sqrt(1 + (t * t) / 4);
	const pInteraction = 2 * (1 - (0.5 + (3 / 8) * u * (1 - (t * t) / (12 * (1 + (t * t) / 4)))));

	test.each([
		['part', 1, 8, 8],
		['appraiser', 1, 0, 0],
		['partXAppraiser', 1, 32, 32]
	] as const)('%s: df %i, SS %f, MS %f', (key, df, ss, ms) => {
		expect(out.full[key].df).toBe(df);
		expect(out.full[key].ss).toBeCloseTo(ss, 12);
		expect(out.full[key].ms).toBeCloseTo(ms, 12);
	});

	test('error and total rows, F and closed-form p-values', () => {
		expect(out.full.repeatability).toEqual({ df: 4, ss: 8, ms: 2 });
		expect(out.full.total.df).toBe(7);
		expect(out.full.total.ss).toBeCloseTo(48, 12);
		expect(out.full.partXAppraiser.f).toBeCloseTo(16, 12);
		expect(out.full.partXAppraiser.p).toBeCloseTo(pInteraction, 10);
		expect(out.full.part.f).toBeCloseTo(0.25, 12);
		expect(out.full.part.p).toBeCloseTo(1 - (2 / Math.PI) * Math.atan(0.5), 10);
		expect(out.full.appraiser.f).toBe(0);
		expect(out.full.appraiser.p).toBe(1);
		expect(out.interactionPooled).toBe(false);
	});

	test('negative part and appraiser estimates are set to 0 and flagged; GRR is everything', () => {
		expect(out.components.partToPart.variance).toBe(0);
		expect(out.components.partToPart.truncatedAtZero).toBe(true);
		expect(out.components.appraiser.variance).toBe(0);
		expect(out.components.appraiser.truncatedAtZero).toBe(true);
		expect(out.components.partXAppraiser?.variance).toBeCloseTo(15, 12);
		expect(out.components.repeatability.variance).toBeCloseTo(2, 12);
		expect(out.components.totalGrr.variance).toBeCloseTo(17, 12);
		expect(out.components.totalGrr.pctContribution).toBeCloseTo(100, 12);
		// floor(1.41 * 0 / sqrt(17)) = 0, raised to the floor of 1.
		expect(out.ndc).toBe(1);
		expect(out.verdict.overall).toBe('not-acceptable');
	});

	test('zero repeatability scatter with interaction: F unbounded reported as null with p = 0', () => {
		const exact: MsaRow[] = cells.flatMap(([part, appraiser, vs]) => {
			const m = ((vs[0] ?? 0) + (vs[1] ?? 0)) / 2;
			return [1, 2].map((trial) => ({ part, appraiser, trial, value: m }));
		});
		const r = analyse(exact);
		expect(r.full.repeatability.ms).toBe(0);
		expect(r.full.partXAppraiser.f).toBeNull();
		expect(r.full.partXAppraiser.p).toBe(0);
		expect(r.interactionPooled).toBe(false);
	});
});

describe('bad input and options give typed errors, never NaN', () => {
	const { rows } = loadExample('houf-berman-1988-thermal-impedance');

	test.each<[string, string, MsaRow[]]>([
		['empty', 'empty', []],
		['NaN value', 'non-finite-value', rows.map((r, i) => (i === 5 ? { ...r, value: Number.NaN } : r))],
		['Infinity value', 'non-finite-value', rows.map((r, i) => (i === 0 ? { ...r, value: Infinity } : r))],
		['non-integer trial', 'invalid-row', rows.map((r, i) => (i === 3 ? { ...r, trial: 1.5 } : r))],
		['empty part name', 'invalid-row', rows.map((r, i) => (i === 3 ? { ...r, part: '' } : r))],
		['duplicate cell', 'duplicate-cell', [...rows, { ...(rows[0] ?? { part: '1', appraiser: '1', trial: 1, value: 0 }) }]],
		['one trial', 'too-few-trials', rows.filter((r) => r.trial === 1)],
		['one part', 'too-few-parts', rows.filter((r) => r.part === '1')],
		['one appraiser', 'too-few-appraisers', rows.filter((r) => r.appraiser === '1')],
		['no variation', 'no-variation', rows.map((r) => ({ ...r, value: 3 }))]
	])('%s -> %s', (_name, code, input) => {
		const result = gaugeRrAnova(input);
		expect(result.ok).toBe(false);
		if (!result.ok) {
			expect(result.error.code).toBe(code);
			expect(result.error.message.length).toBeGreaterThan(0);
		}
	});

	test('NaN error names the offending row index', () => {
		const result = gaugeRrAnova(rows.map((r, i) => (i === 5 ? { ...r, value: Number.NaN } : r)));
		expect(result.ok ? null : result.error.rowIndices).toEqual([5]);
	});

	test('unbalanced design names exactly the missing cells', () => {
		const input = rows.filter(
			(r) => !((r.part === '4' && r.appraiser === '2' && r.trial === 3) || (r.part === '9' && r.appraiser === '3' && r.trial === 1))
		);
		const result = gaugeRrAnova(input);
		expect(result.ok).toBe(false);
		if (!result.ok) {
			expect(result.error.code).toBe('unbalanced');
			expect(result.error.cells).toEqual([
				{ part: '4', appraiser: '2', trial: 3 },
				{ part: '9', appraiser: '3', trial: 1 }
			]);
		}
	});

	test.each<[string, Parameters<typeof gaugeRrAnova>[1]]>([
		['alpha 0', { alpha: 0 }],
		['alpha NaN', { alpha: Number.NaN }],
		['alpha 1.5', { alpha: 1.5 }],
		['multiplier 0', { studyVariationMultiplier: 0 }],
		['multiplier -6', { studyVariationMultiplier: -6 }],
		['usl = lsl', { spec: { lsl: 1, usl: 1 } }],
		['usl < lsl', { spec: { lsl: 2, usl: 1 } }],
		['NaN limit', { spec: { lsl: Number.NaN, usl: 1 } }]
	])('%s -> invalid-option', (_name, options) => {
		const result = gaugeRrAnova(rows, options);
		expect(result.ok ? 'ok' : result.error.code).toBe('invalid-option');
	});
});

// The ANOVA's p-values come from fUpperTailAccurate (appended to src/lib/stats/distributions.ts).
// References: NIST/SEMATECH e-Handbook 1.3.6.7.3, upper 5 % point of F(4, 10) = 3.478; the
// Houf & Berman part F = 162.2703 on (9, 18) df has p = 2.29e-15 as printed by ss.rr (JASP ch. 10.1),
// which 1 - cdf cannot resolve (it gives about 2.33e-15).
describe('fUpperTailAccurate, the F tail used by the ANOVA', () => {
	test('F(4, 10) upper 5 % point 3.478 (NIST e-Handbook 1.3.6.7.3)', () => {
		expect(fUpperTailAccurate(3.478, 4, 10)).toBeCloseTo(0.05, 4);
	});
	test('tiny tail keeps 3 significant digits where 1 - cdf does not', () => {
		expectPrinted(fUpperTailAccurate(162.2702703, 9, 18), 2.29e-15);
		expect(Math.abs(fUpperTail(162.2702703, 9, 18) - 2.29e-15)).toBeGreaterThan(0.005e-15);
	});
	test.each([
		[0, 1],
		[-1, 1]
	])('f = %f -> 1', (f, p) => {
		expect(fUpperTailAccurate(f, 3, 5)).toBe(p);
	});
	test('invalid df -> NaN (the ANOVA never passes df <= 0)', () => {
		expect(fUpperTailAccurate(1, 0, 5)).toBeNaN();
	});
});

// Not published (the AIAG manual's ANOVA tables III-B 6 to 8 were not retrieved): compared with
// the reference file's computed_check for example 3, an independent python3 recomputation, as the
// README allows when the test says so. Exercises pooling on a 10 x 3 x 3 design (p = 0.974).
describe('AIAG average-and-range data through the ANOVA (reference recomputation, not published)', () => {
	const { example, rows } = loadExample('aiag-msa-4th-average-and-range');
	const cc = example.computed_check;
	const out = analyse(rows);
	test('interaction p 0.974 > 0.05 is pooled; reduced table and components match computed_check', () => {
		expect(out.interactionPooled).toBe(true);
		expect(out.full.partXAppraiser.p).toBeCloseTo(num(cc, 'anova_complete_model', 'part_x_operator', 'p'), 8);
		expect(out.full.part.f).toBeCloseTo(num(cc, 'anova_complete_model', 'part', 'F'), 5);
		expect(out.reduced?.repeatability.df).toBe(78);
		expect(out.reduced?.repeatability.ms).toBeCloseTo(num(cc, 'anova_reduced_model_interaction_pooled', 'repeatability', 'ms'), 10);
		expect(out.reduced?.appraiser.f).toBeCloseTo(num(cc, 'anova_reduced_model_interaction_pooled', 'operator', 'F'), 6);
		const vc = ['anova_variance_components_pooled'];
		expect(out.components.totalGrr.variance).toBeCloseTo(num(cc, ...vc, 'total_grr', 'varcomp'), 10);
		expect(out.components.partToPart.variance).toBeCloseTo(num(cc, ...vc, 'part_to_part', 'varcomp'), 9);
		expect(out.components.totalGrr.pctStudyVariation).toBeCloseTo(num(cc, ...vc, 'total_grr', 'pct_study_var'), 6);
		expect(out.ndc).toBe(Math.floor(num(cc, 'anova_ndc_ratio_1.41')));
	});
});
