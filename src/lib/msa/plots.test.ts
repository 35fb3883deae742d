import { describe, expect, test } from 'vitest';
import { gaugeRrAnova } from './anova';
import { averageRangeStudy } from './average-range';
import { anovaComponentBars, averageRangeComponentBars, rangeChart, studyPlots } from './plots';
import { loadExample, num, nums } from './testing/reference-fixtures';
import { expectPrinted, nonFiniteNumbers } from './testing/expect-printed';

// Reference: AIAG MSA Reference Manual, 4th ed. (2010), Figure III-B 15 data collection sheet
// (public reproduction, https://www.scribd.com/document/41508929/R-R-Format): the interaction
// plot's points are the sheet's appraiser/part averages, the by-part means its part averages,
// the by-appraiser means its X-bar values, the range chart its ranges and UCL_R.
describe('plot series against the AIAG data collection sheet', () => {
	const { example, rows } = loadExample('aiag-msa-4th-average-and-range');
	const pub = example.published_results;
	const result = studyPlots(rows);
	if (!result.ok) throw new Error(result.error.message);
	const plots = result.value;

	test('no NaN anywhere; every measurement appears once by part and once by appraiser', () => {
		expect(nonFiniteNumbers(plots)).toEqual([]);
		expect(plots.byPart.reduce((s, p) => s + p.points.length, 0)).toBe(rows.length);
		expect(plots.byAppraiser.reduce((s, a) => s + a.points.length, 0)).toBe(rows.length);
	});

	test.each(['A', 'B', 'C'])('interaction series of appraiser %s = sheet averages', (a) => {
		const series = plots.interaction.series.find((s) => s.appraiser === a);
		nums(pub, 'appraiser_part_averages', a).forEach((v, i) => expectPrinted(series?.means[i], v, `part ${i + 1}`));
		const byAppraiser = plots.byAppraiser.find((s) => s.appraiser === a);
		expectPrinted(byAppraiser?.mean, num(pub, 'appraiser_averages', `Xbar_${a.toLowerCase()}`));
	});

	test('by-part means = sheet part averages', () => {
		expect(plots.interaction.parts).toEqual(plots.byPart.map((p) => p.part));
		nums(pub, 'part_averages').forEach((v, i) => expectPrinted(plots.byPart[i]?.mean, v, `part ${i + 1}`));
	});

	test('range chart: ranges, centre line R-double-bar 0.3417, UCL 0.8815 with D4 = 2.58', () => {
		const ar = averageRangeStudy(rows, { d4: 2.58 });
		if (!ar.ok) throw new Error(ar.error.message);
		const chart = rangeChart(ar.value);
		expectPrinted(chart.centreLine, num(pub, 'Rbarbar'));
		expectPrinted(chart.upperLimit, num(pub, 'UCL_R'));
		for (const a of ['A', 'B', 'C']) {
			const s = chart.series.find((x) => x.appraiser === a);
			nums(pub, 'appraiser_part_ranges', a).forEach((v, i) => expectPrinted(s?.ranges[i], v));
		}
	});

	// Not published: the manual's report page was not retrieved; the reference file's
	// computed_check gives %GRR etc. of total variation; % contribution = (%TV)^2 / 100 by definition.
	test('average-and-range bars vs the reference file recomputation (not published)', () => {
		const ar = averageRangeStudy(rows);
		if (!ar.ok) throw new Error(ar.error.message);
		const bars = averageRangeComponentBars(ar.value);
		const cc = ['average_and_range_results_from_unrounded_intermediates'];
		const grr = num(example.computed_check, ...cc, 'pct_GRR');
		expect(bars.map((b) => b.source)).toEqual(['totalGrr', 'repeatability', 'reproducibility', 'partToPart']);
		expect(bars[0]?.pctStudyVariation).toBeCloseTo(grr, 6);
		expect(bars[0]?.pctContribution).toBeCloseTo((grr * grr) / 100, 5);
		expect(bars[3]?.pctStudyVariation).toBeCloseTo(num(example.computed_check, ...cc, 'pct_PV'), 6);
		expect(bars[0]?.pctTolerance).toBeNull();
	});
});

// Reference: SixSigma ss.rr reference page, ss.data.rr example (tolerance 1.1),
// https://emilopezcano.github.io/SixSigma/reference/ss.rr.html (data and values in
// shared/reference/msa/gauge-rr-examples.json).
describe('ANOVA components-of-variation bars against ss.rr (paper helicopter)', () => {
	const { example, rows } = loadExample('sixsigma-ss-data-rr-paper-helicopter');
	const pub = example.published_results;
	const result = gaugeRrAnova(rows, { spec: { lsl: 0.7, usl: 1.8 } });
	if (!result.ok) throw new Error(result.error.message);
	const bars = anovaComponentBars(result.value);
	const ref = { totalGrr: 'total_grr', repeatability: 'repeatability', reproducibility: 'reproducibility', partToPart: 'part_to_part' } as const;
	test.each(bars.map((b) => [b.source, b] as const))('%s: %%Contribution, %%StudyVar, %%Tolerance', (source, bar) => {
		const vc = ['variance_components', ref[source]];
		expectPrinted(bar.pctContribution, num(pub, ...vc, 'pct_contribution'));
		expectPrinted(bar.pctStudyVariation, num(pub, ...vc, 'pct_study_var'));
		expectPrinted(bar.pctTolerance, num(pub, ...vc, 'pct_tolerance'));
	});
});

describe('plot input errors are typed', () => {
	test.each([
		['empty', 'empty', []],
		['NaN', 'non-finite-value', [{ part: 'a', appraiser: 'x', trial: 1, value: Number.NaN }]],
		[
			'unbalanced',
			'unbalanced',
			[
				{ part: 'a', appraiser: 'x', trial: 1, value: 1 },
				{ part: 'b', appraiser: 'y', trial: 1, value: 1 }
			]
		]
	] as const)('%s -> %s', (_name, code, input) => {
		const result = studyPlots(input);
		expect(result.ok ? 'ok' : result.error.code).toBe(code);
	});
});
