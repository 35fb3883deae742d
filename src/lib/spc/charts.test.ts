import { describe, expect, test } from 'vitest';
import { z } from 'zod';
import {
	computeBaseline,
	cusumParameters,
	cusumSeries,
	ewmaLimitsAt,
	ewmaParameters,
	ewmaSeries,
	formSubgroups,
	groupByInterval,
	groupByParts,
	individualsLimits,
	movingRanges,
	pChart,
	xbarRLimits,
	xbarRLimitsFromSummary,
	xbarSLimits,
	xbarSLimitsFromSummary
} from './charts';
import { loadReference } from './reference-data.test-helper';
import type { SpcResult } from './types';

function unwrap<T>(r: SpcResult<T>): T {
	if (!r.ok) throw new Error(`${r.error.code}: ${r.error.message}`);
	return r.value;
}

function errorCode(r: SpcResult<unknown>): string | null {
	return r.ok ? null : r.error.code;
}

const examples = loadReference(
	'worked-examples.json',
	z.object({ examples: z.array(z.object({ id: z.string(), source: z.string() }).passthrough()) })
).examples;

function example(id: string): unknown {
	const e = examples.find((x) => x.id === id);
	if (!e) throw new Error(`missing example ${id}`);
	return e;
}

// Exact d2(2) = 2/sqrt(pi) = 1.128379; the published examples used the 3-decimal 1.128.
// That alone moves a limit by 3 MRbar (1/1.128 - 1/1.128379), which each test adds to its
// tolerance instead of hiding it.
const d2Shift = (mrBar: number) => 3 * mrBar * (1 / 1.128 - 1 / 1.1283791670955126);

describe('individuals chart: NIST/SEMATECH e-Handbook 6.3.2.2 flow-rate example', () => {
	const nist = z
		.object({
			data: z.object({ flowrate_x: z.array(z.number()) }),
			published_results: z.object({
				xbar: z.number(),
				mrbar: z.number(),
				individuals_chart: z.object({ UCL: z.number(), CL: z.number(), LCL: z.number() })
			})
		})
		.parse(example('nist-ehandbook-6.3.2.2-individuals-flowrate'));
	const chart = unwrap(individualsLimits(nist.data.flowrate_x));
	const pub = nist.published_results;
	// "NIST/SEMATECH e-Handbook of Statistical Methods, 6.3.2.2, individuals chart example:
	// UCL 55.8041, LCL 45.8159" (printed to 4 decimals from d2 = 1.128).
	test.each([
		['mean = 50.81', chart.mean, pub.xbar, 0.005],
		['MRbar = 1.8778', chart.movingRangeMean, pub.mrbar, 0.00005],
		['CL = 50.81', chart.individuals.centerLine, pub.individuals_chart.CL, 0.005],
		['UCL = 55.8041', chart.individuals.upperControlLimit, pub.individuals_chart.UCL, 0.00005 + d2Shift(pub.mrbar)],
		['LCL = 45.8159', chart.individuals.lowerControlLimit, pub.individuals_chart.LCL, 0.00005 + d2Shift(pub.mrbar)]
	])('%s', (_label, actual, published, tolerance) => {
		expect(Math.abs(actual - published)).toBeLessThanOrEqual(tolerance);
	});
	test('moving ranges equal the published column', () => {
		const published = z
			.object({ data: z.object({ moving_range_as_published: z.array(z.number().nullable()) }) })
			.parse(example('nist-ehandbook-6.3.2.2-individuals-flowrate')).data.moving_range_as_published;
		movingRanges(nist.data.flowrate_x).forEach((mr, i) => {
			const p = published[i];
			if (p === null || p === undefined) expect(mr).toBeNull();
			else expect(Math.abs((mr ?? Number.NaN) - p)).toBeLessThan(1e-9);
		});
	});
	test('no point beyond the limits, as the handbook states for this process', () => {
		for (const x of nist.data.flowrate_x) {
			expect(x).toBeLessThanOrEqual(chart.individuals.upperControlLimit);
			expect(x).toBeGreaterThanOrEqual(chart.individuals.lowerControlLimit);
		}
	});
	// Moving-range chart: the page gives no numbers; D4(2) = 3.267 and D3(2) = 0 are the
	// published constants (control-chart-constants.json), so UCL_MR / MRbar must be 3.267.
	test('MR chart UCL = D4(2) MRbar with D4 = 3.267, LCL = 0', () => {
		expect(Math.abs(chart.movingRange.upperControlLimit / chart.movingRangeMean - 3.267)).toBeLessThanOrEqual(0.0015);
		expect(chart.movingRange.lowerControlLimit).toBe(0);
	});
});

describe('individuals chart: Montgomery & Runger Example 16-2 concentration data', () => {
	const mr = z
		.object({
			data: z.object({ concentration_x: z.array(z.number()) }),
			published_results: z.object({
				xbar: z.number(),
				mrbar: z.number(),
				individuals_chart: z.object({ UCL: z.number(), CL: z.number(), LCL: z.number() })
			})
		})
		.parse(example('montgomery-runger-example-16-2-individuals-concentration'));
	const chart = unwrap(individualsLimits(mr.data.concentration_x));
	const pub = mr.published_results;
	// The book rounds xbar and MRbar before the limits (file note): rounding accounts for up
	// to 0.0064 on the UCL, d2 rounding for d2Shift, plus half a printed unit (0.005).
	const tolerance = 0.0065 + d2Shift(pub.mrbar) + 0.005;
	test.each([
		['xbar = 99.1', chart.mean, pub.xbar, 0.005],
		['MRbar = 2.59', chart.movingRangeMean, pub.mrbar, 0.005],
		['UCL = 105.99', chart.individuals.upperControlLimit, pub.individuals_chart.UCL, tolerance],
		['LCL = 92.21', chart.individuals.lowerControlLimit, pub.individuals_chart.LCL, tolerance]
	])('%s', (_label, actual, published, tol) => {
		expect(Math.abs(actual - published)).toBeLessThanOrEqual(tol);
	});
});

describe('X-bar/R and X-bar/S from summaries: Montgomery & Runger Example 16-1 vane opening', () => {
	const vane = z
		.object({
			published_inputs: z.object({ n: z.number(), xbarbar: z.number(), rbar: z.number(), sbar: z.number() }),
			published_results: z.object({
				xbar_chart_from_R: z.object({ UCL: z.number(), CL: z.number(), LCL: z.number() }),
				R_chart: z.object({ UCL: z.number(), CL: z.number(), LCL: z.number() }),
				S_chart: z.object({ UCL: z.number(), CL: z.number(), LCL: z.number() }),
				revised_after_discarding_five_samples: z.object({
					xbarbar: z.number(),
					rbar: z.number(),
					xbar_chart: z.object({ UCL: z.number(), LCL: z.number() }),
					R_chart: z.object({ UCL: z.number(), LCL: z.number() })
				})
			})
		})
		.parse(example('montgomery-runger-example-16-1-xbar-r-s-vane-opening-summary'));
	const inp = vane.published_inputs;
	const pub = vane.published_results;
	const r = unwrap(xbarRLimitsFromSummary(inp.xbarbar, inp.rbar, inp.n));
	const s = unwrap(xbarSLimitsFromSummary(inp.xbarbar, inp.sbar, inp.n));
	const rev = pub.revised_after_discarding_five_samples;
	const r2 = unwrap(xbarRLimitsFromSummary(rev.xbarbar, rev.rbar, inp.n));
	// Tolerances from the file notes: printed to 2 decimals (0.005); the book's D4 = 2.115
	// versus 2.1145 and its unrounded revised Rbar allow 0.01; S chart UCL 0.001.
	test.each([
		['X-bar UCL 36.67', r.xbar.upperControlLimit, pub.xbar_chart_from_R.UCL, 0.005],
		['X-bar LCL 29.97', r.xbar.lowerControlLimit, pub.xbar_chart_from_R.LCL, 0.005],
		['R UCL 12.27', r.dispersion.upperControlLimit, pub.R_chart.UCL, 0.01],
		['R LCL 0', r.dispersion.lowerControlLimit, pub.R_chart.LCL, 0],
		['S UCL 4.899', s.dispersion.upperControlLimit, pub.S_chart.UCL, 0.001],
		['S LCL 0', s.dispersion.lowerControlLimit, pub.S_chart.LCL, 0],
		['revised X-bar UCL 36.1', r2.xbar.upperControlLimit, rev.xbar_chart.UCL, 0.01],
		['revised X-bar LCL 30.33', r2.xbar.lowerControlLimit, rev.xbar_chart.LCL, 0.005],
		['revised R UCL 10.57', r2.dispersion.upperControlLimit, rev.R_chart.UCL, 0.01]
	])('%s', (_label, actual, published, tol) => {
		expect(Math.abs(actual - published)).toBeLessThanOrEqual(tol);
	});
});

describe('X-bar/R from summaries: operations-management Solved Problem S6.7 (n = 10)', () => {
	const s67 = z
		.object({
			data: z.object({ subgroup_size: z.number(), mean_mm: z.array(z.number()), range_mm: z.array(z.number()) }),
			published_results: z.object({
				xbarbar: z.number(),
				rbar: z.number(),
				xbar_chart: z.object({ UCL: z.number(), LCL: z.number() }),
				R_chart: z.object({ UCL: z.number(), LCL: z.number() })
			})
		})
		.parse(example('operations-management-supplement-s6-7-xbar-r-pistons'));
	const pub = s67.published_results;
	const r = unwrap(xbarRLimitsFromSummary(pub.xbarbar, pub.rbar, s67.data.subgroup_size));
	test.each([
		['X-bar UCL 156.54', r.xbar.upperControlLimit, pub.xbar_chart.UCL],
		['X-bar LCL 153.78', r.xbar.lowerControlLimit, pub.xbar_chart.LCL],
		['R UCL 7.96', r.dispersion.upperControlLimit, pub.R_chart.UCL],
		['R LCL 1.0', r.dispersion.lowerControlLimit, pub.R_chart.LCL]
	])('%s (printed to 2 decimals)', (_label, actual, published) => {
		expect(Math.abs(actual - published)).toBeLessThanOrEqual(0.005);
	});
});

describe('X-bar/R and X-bar/S from raw values (independent hand computation in the test)', () => {
	// Subgroups of 5: [1..5] and [6..10], means 3 and 8, ranges 4 and 4, SDs sqrt(2.5).
	// Limits with the published n = 5 constants A2 = 0.577, D4 = 2.114, A3 = 1.427,
	// B4 = 2.089 (control-chart-constants.json); tolerance 0.0015 x statistic.
	const values = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11];
	const r = unwrap(xbarRLimits(values, 5));
	const s = unwrap(xbarSLimits(values, 5));
	const sd = Math.sqrt(2.5);
	test.each([
		['grand mean', r.grandMean, 5.5, 1e-12],
		['Rbar', r.dispersionMean, 4, 1e-12],
		['X-bar UCL', r.xbar.upperControlLimit, 5.5 + 0.577 * 4, 0.0015 * 4],
		['R UCL', r.dispersion.upperControlLimit, 2.114 * 4, 0.0015 * 4],
		['Sbar', s.dispersionMean, sd, 1e-12],
		['X-bar (S) LCL', s.xbar.lowerControlLimit, 5.5 - 1.427 * sd, 0.0015 * sd],
		['S UCL', s.dispersion.upperControlLimit, 2.089 * sd, 0.0015 * sd]
	])('%s', (_label, actual, expected, tol) => {
		expect(Math.abs(actual - expected)).toBeLessThanOrEqual(tol);
	});
	test('the trailing incomplete subgroup (value 11) is ignored', () => {
		expect(r.subgroups.map((g) => g.startIndex)).toEqual([0, 5]);
	});
	test('a subgroup with an excluded part is dropped whole', () => {
		const g = unwrap(formSubgroups([...values, 12, 13, 14, 15], 5, { exclusions: [{ index: 6, reason: 'fixture jam' }] }));
		expect(g.map((x) => x.startIndex)).toEqual([0, 10]);
	});
});

describe('exclusions and ranges in the individuals baseline', () => {
	// Hand computation: values 10, 12, [50 excluded], 11, 13 -> mean 11.5; moving ranges only
	// between included neighbours: |12-10| = 2 and |13-11| = 2 (the pairs around 50 are
	// skipped, not bridged), so MRbar = 2.
	const values = [10, 12, 50, 11, 13];
	const chart = unwrap(individualsLimits(values, { exclusions: [{ index: 2, reason: 'probe contact fault' }] }));
	test('mean and MRbar skip the excluded point without bridging it', () => {
		expect(chart.mean).toBeCloseTo(11.5, 12);
		expect(chart.movingRangeMean).toBeCloseTo(2, 12);
		expect(chart.movingRangeCount).toBe(2);
		expect(chart.includedIndices).toEqual([0, 1, 3, 4]);
	});
	test('a range [1, 4) uses only 12, 50, 11', () => {
		const c = unwrap(individualsLimits(values, { fromIndex: 1, toIndex: 4 }));
		expect(c.mean).toBeCloseTo(73 / 3, 12);
		expect(c.movingRangeMean).toBeCloseTo((38 + 39) / 2, 12);
	});
	test.each([
		['exclusion without reason', { exclusions: [{ index: 1, reason: '  ' }] }, 'INVALID_SELECTION'],
		['exclusion outside range', { fromIndex: 0, toIndex: 3, exclusions: [{ index: 4, reason: 'x' }] }, 'INVALID_SELECTION'],
		['range past the end', { fromIndex: 0, toIndex: 6 }, 'INVALID_SELECTION'],
		['reversed range', { fromIndex: 3, toIndex: 2 }, 'INVALID_SELECTION'],
		['fractional bound', { fromIndex: 0.5 }, 'INVALID_SELECTION'],
		['one point left', { fromIndex: 4, toIndex: 5 }, 'TOO_FEW_POINTS']
	])('%s -> %s', (_label, selection, code) => {
		expect(errorCode(individualsLimits(values, selection))).toBe(code);
	});
	test('an excluded NaN is allowed, an included NaN is not', () => {
		const withNaN = [10, 12, Number.NaN, 11, 13];
		expect(individualsLimits(withNaN, { exclusions: [{ index: 2, reason: 'no reading' }] }).ok).toBe(true);
		expect(errorCode(individualsLimits(withNaN))).toBe('NON_FINITE_VALUE');
	});
});

describe('bad input to the limit functions gives typed errors, never NaN', () => {
	test.each([
		['empty I-MR', individualsLimits([]), 'EMPTY_SERIES'],
		['one point I-MR', individualsLimits([1]), 'TOO_FEW_POINTS'],
		['+Infinity I-MR', individualsLimits([1, Number.POSITIVE_INFINITY]), 'NON_FINITE_VALUE'],
		['-Infinity I-MR', individualsLimits([Number.NEGATIVE_INFINITY, 1]), 'NON_FINITE_VALUE'],
		['constant I-MR', individualsLimits([2, 2, 2]), 'ZERO_SIGMA'],
		['n = 1 X-bar/R', xbarRLimits([1, 2, 3], 1), 'INVALID_SUBGROUP_SIZE'],
		['one subgroup X-bar/S', xbarSLimits([1, 2, 3], 3), 'TOO_FEW_POINTS'],
		['empty X-bar/R', xbarRLimits([], 5), 'EMPTY_SERIES'],
		['NaN summary', xbarRLimitsFromSummary(Number.NaN, 1, 5), 'NON_FINITE_VALUE'],
		['zero Rbar', xbarRLimitsFromSummary(1, 0, 5), 'ZERO_SIGMA'],
		['n = 26 summary', xbarSLimitsFromSummary(1, 1, 26), 'INVALID_SUBGROUP_SIZE'],
		['baseline shorter than 30', computeBaseline([1, 2, 3]), 'TOO_FEW_POINTS']
	])('%s -> %s', (_label, result, code) => {
		expect(errorCode(result)).toBe(code);
	});
});

describe('p-chart of yield (variable subgroup size)', () => {
	// Hand computation with the p-chart formula pbar +- 3 sqrt(pbar(1 - pbar)/n_i)
	// (Montgomery, Introduction to Statistical Quality Control, ch. 7, recalled from memory):
	// counts 2/100, 4/100, 3/50 -> pbar = 9/250 = 0.036.
	const counts = [
		{ failCount: 2, testedCount: 100 },
		{ failCount: 4, testedCount: 100 },
		{ failCount: 3, testedCount: 50 }
	];
	test('fraction-failing limits per subgroup size, lower limit clipped at 0', () => {
		const c = unwrap(pChart(counts, { statistic: 'fraction-failing' }));
		expect(c.fractionFailingMean).toBeCloseTo(0.036, 12);
		const half100 = 3 * Math.sqrt((0.036 * 0.964) / 100);
		const half50 = 3 * Math.sqrt((0.036 * 0.964) / 50);
		expect(c.points[0]?.limits.upperControlLimit).toBeCloseTo(0.036 + half100, 12);
		expect(c.points[2]?.limits.upperControlLimit).toBeCloseTo(0.036 + half50, 12);
		expect(c.points[0]?.limits.lowerControlLimit).toBe(0);
	});
	test('yield chart mirrors the fraction-failing chart', () => {
		const c = unwrap(pChart(counts));
		expect(c.centerLine).toBeCloseTo(0.964, 12);
		expect(c.points[1]?.value).toBeCloseTo(0.96, 12);
		expect(c.points[0]?.limits.upperControlLimit).toBe(1);
		expect(c.points[0]?.limits.lowerControlLimit).toBeCloseTo(0.964 - 3 * Math.sqrt((0.036 * 0.964) / 100), 12);
	});
	// Montgomery ISQC Example 7.1 (orange-juice cans, 30 samples of n = 50, 347 nonconforming):
	// pbar = 0.2313, UCL = 0.4102, LCL = 0.0524 (recalled from memory). The sample split
	// below is ours; only the total matters for pbar and the limits.
	test('Montgomery ISQC Example 7.1 limits (recalled from memory)', () => {
		const split = Array.from({ length: 30 }, (_, i) => ({ failCount: i < 17 ? 12 : 11, testedCount: 50 }));
		expect(split.reduce((a, s) => a + s.failCount, 0)).toBe(347);
		const c = unwrap(pChart(split, { statistic: 'fraction-failing' }));
		expect(Math.abs(c.fractionFailingMean - 0.2313)).toBeLessThanOrEqual(0.00005);
		expect(Math.abs((c.points[0]?.limits.upperControlLimit ?? 0) - 0.4102)).toBeLessThanOrEqual(0.0001);
		expect(Math.abs((c.points[0]?.limits.lowerControlLimit ?? 0) - 0.0524)).toBeLessThanOrEqual(0.0001);
	});
	test('a point exactly on the limit is not beyond it', () => {
		// pbar = 0.5 from two subgroups of 4 (1 and 3 fails): sigma = 0.25, UCL = 1.25 -> 1, LCL 0.
		const c = unwrap(pChart([{ failCount: 1, testedCount: 4 }, { failCount: 3, testedCount: 4 }, { failCount: 4, testedCount: 4 }], { statistic: 'fraction-failing', selection: { toIndex: 2 } }));
		expect(c.points[2]?.value).toBe(1);
		expect(c.points[2]?.limits.upperControlLimit).toBe(1);
		expect(c.points[2]?.beyond).toBeNull();
	});
	test.each([
		['empty', [], 'EMPTY_SERIES'],
		['no failures at all', [{ failCount: 0, testedCount: 10 }], 'ZERO_SIGMA'],
		['fails > tested', [{ failCount: 3, testedCount: 2 }], 'INVALID_COUNTS'],
		['zero tested', [{ failCount: 0, testedCount: 0 }], 'INVALID_COUNTS'],
		['NaN count', [{ failCount: Number.NaN, testedCount: 5 }], 'INVALID_COUNTS']
	])('%s -> %s', (_label, c, code) => {
		expect(errorCode(pChart(c))).toBe(code);
	});
	test('grouping per N parts drops the incomplete tail', () => {
		expect(unwrap(groupByParts([true, false, true, false, false], 2))).toEqual([
			{ failCount: 1, testedCount: 2 },
			{ failCount: 1, testedCount: 2 }
		]);
		expect(errorCode(groupByParts([true], 0))).toBe('INVALID_SUBGROUP_SIZE');
	});
	test('grouping per hour aligns bins to the hour and omits empty hours', () => {
		const h = 3_600_000;
		const bins = unwrap(
			groupByInterval([
				{ timeMs: 2 * h + 5, passed: true },
				{ timeMs: 0, passed: false },
				{ timeMs: h - 1, passed: true },
				{ timeMs: 2 * h, passed: false }
			])
		);
		expect(bins).toEqual([
			{ startMs: 0, failCount: 1, testedCount: 2 },
			{ startMs: 2 * h, failCount: 1, testedCount: 2 }
		]);
		expect(errorCode(groupByInterval([{ timeMs: Number.NaN, passed: true }]))).toBe('NON_FINITE_VALUE');
	});
});

describe('EWMA', () => {
	// NIST/SEMATECH e-Handbook 6.3.2.4: lambda = 0.3 gives sqrt(lambda/(2 - lambda)) = .4201
	// (recalled from memory; see cusum-ad-capability-references.json). Far from the start
	// the exact limits approach that asymptote.
	test('asymptotic width factor for lambda = 0.3 is 0.4201 (NIST 6.3.2.4, recalled from memory)', () => {
		const p = unwrap(ewmaParameters({ target: 0, sigma: 1, lambda: 0.3, limitWidthSigma: 1 }));
		expect(Math.abs(ewmaLimitsAt(p, 200).upper - 0.4201)).toBeLessThanOrEqual(0.00005);
	});
	test('defaults are lambda 0.2 and L = 3', () => {
		const p = unwrap(ewmaParameters({ target: 5, sigma: 2 }));
		expect(p.lambda).toBe(0.2);
		expect(p.limitWidthSigma).toBe(3);
	});
	// Independent hand computation: z_i as the explicit weighted sum
	// (1-l)^i z0 + l sum_j (1-l)^(i-j) x_j, and Var z_i = sigma^2 l^2 sum_{j<i} (1-l)^(2j),
	// instead of the recursion and closed form the code uses.
	test('statistic and exact time-varying limits equal the explicit weighted sums', () => {
		const lambda = 0.25;
		const target = 10;
		const sigma = 2;
		const x = [11, 9.5, 13, 12.2, 8, 10.4, 14.9];
		const p = unwrap(ewmaParameters({ target, sigma, lambda, limitWidthSigma: 2.7 }));
		const series = unwrap(ewmaSeries(x, p));
		x.forEach((_, k) => {
			const i = k + 1;
			let z = (1 - lambda) ** i * target;
			for (let j = 1; j <= i; j++) z += lambda * (1 - lambda) ** (i - j) * (x[j - 1] ?? 0);
			let variance = 0;
			for (let j = 0; j < i; j++) variance += lambda * lambda * (1 - lambda) ** (2 * j);
			const half = 2.7 * sigma * Math.sqrt(variance);
			expect(series[k]?.ewma).toBeCloseTo(z, 12);
			expect(series[k]?.upperControlLimit).toBeCloseTo(target + half, 12);
			expect(series[k]?.lowerControlLimit).toBeCloseTo(target - half, 12);
		});
	});
	test('a statistic exactly on its limit does not signal; just beyond does', () => {
		// lambda = 1 makes z = x and the first limit target +- L sigma exactly.
		const p = unwrap(ewmaParameters({ target: 0, sigma: 1, lambda: 1, limitWidthSigma: 3 }));
		expect(unwrap(ewmaSeries([3], p))[0]?.beyond).toBeNull();
		expect(unwrap(ewmaSeries([3.0001], p))[0]?.beyond).toBe('above');
		expect(unwrap(ewmaSeries([-3.0001], p))[0]?.beyond).toBe('below');
	});
	test.each([
		['lambda 0', { target: 0, sigma: 1, lambda: 0 }, 'INVALID_PARAMETER'],
		['lambda > 1', { target: 0, sigma: 1, lambda: 1.5 }, 'INVALID_PARAMETER'],
		['lambda NaN', { target: 0, sigma: 1, lambda: Number.NaN }, 'INVALID_PARAMETER'],
		['sigma 0', { target: 0, sigma: 0 }, 'ZERO_SIGMA'],
		['sigma Infinity', { target: 0, sigma: Number.POSITIVE_INFINITY }, 'ZERO_SIGMA'],
		['target NaN', { target: Number.NaN, sigma: 1 }, 'NON_FINITE_VALUE'],
		['L negative', { target: 0, sigma: 1, limitWidthSigma: -3 }, 'INVALID_PARAMETER']
	])('%s -> %s', (_label, input, code) => {
		expect(errorCode(ewmaParameters(input))).toBe(code);
	});
	test('NaN in the series is a typed error; an empty series is empty', () => {
		const p = unwrap(ewmaParameters({ target: 0, sigma: 1 }));
		expect(errorCode(ewmaSeries([1, Number.NaN], p))).toBe('NON_FINITE_VALUE');
		expect(unwrap(ewmaSeries([], p))).toEqual([]);
	});
});

describe('tabular CUSUM: Montgomery & Runger Example 16-6, Table 16-8', () => {
	const ref = loadReference(
		'cusum-ad-capability-references.json',
		z.object({ examples: z.array(z.object({ id: z.string() }).passthrough()) })
	).examples.find((e) => e.id === 'montgomery-runger-example-16-6-tabular-cusum');
	const m = z
		.object({
			published_inputs: z.object({
				target_mu0: z.number(),
				reference_value_K: z.number(),
				decision_interval_H: z.number(),
				concentration_x: z.array(z.number())
			}),
			published: z.object({ upper_cusum_sH: z.array(z.number()), lower_cusum_sL: z.array(z.number()) })
		})
		.parse(ref);
	const inp = m.published_inputs;
	// sigma = 1 makes k and h in sigmas equal the book's K = 1 and H = 10.
	const p = unwrap(cusumParameters({ target: inp.target_mu0, sigma: 1, referenceK: inp.reference_value_K, decisionH: inp.decision_interval_H }));
	const series = unwrap(cusumSeries(inp.concentration_x, p));
	test.each(series.map((pt, i) => [i + 1, pt.upper, pt.lower, m.published.upper_cusum_sH[i], m.published.lower_cusum_sL[i]] as const))(
		'observation %i: sH = %f, sL = %f',
		(_obs, upper, lower, publishedUpper, publishedLower) => {
			// Printed to 1 decimal from 1-decimal data, so the values are exact up to rounding error.
			expect(Math.abs(upper - (publishedUpper ?? Number.NaN))).toBeLessThan(1e-9);
			expect(Math.abs(lower - (publishedLower ?? Number.NaN))).toBeLessThan(1e-9);
		}
	);
	test('never exceeds H = 10, as the book concludes', () => {
		expect(series.some((pt) => pt.signalUpper || pt.signalLower)).toBe(false);
	});
	test('a sum exactly equal to H does not signal; above H does (documented choice)', () => {
		const q = unwrap(cusumParameters({ target: 0, sigma: 1, referenceK: 0.5, decisionH: 5 }));
		// Each point of 3 adds 2.5 to C+: 2.5, 5.0 (== H, no signal), 7.5 (signal).
		const s = unwrap(cusumSeries([3, 3, 3], q));
		expect(s.map((pt) => pt.signalUpper)).toEqual([false, false, true]);
	});
	test('defaults are k = 0.5, h = 5', () => {
		const q = unwrap(cusumParameters({ target: 0, sigma: 1 }));
		expect([q.referenceK, q.decisionH]).toEqual([0.5, 5]);
	});
	test.each([
		['sigma 0', { target: 0, sigma: 0 }, 'ZERO_SIGMA'],
		['h 0', { target: 0, sigma: 1, decisionH: 0 }, 'INVALID_PARAMETER'],
		['k negative', { target: 0, sigma: 1, referenceK: -1 }, 'INVALID_PARAMETER'],
		['target Infinity', { target: Number.POSITIVE_INFINITY, sigma: 1 }, 'NON_FINITE_VALUE']
	])('%s -> %s', (_label, input, code) => {
		expect(errorCode(cusumParameters(input))).toBe(code);
	});
});

describe('computeBaseline', () => {
	test('uses exactly the first 30 parts by default and centres EWMA/CUSUM on the baseline', () => {
		const values = Array.from({ length: 40 }, (_, i) => (i % 2 === 0 ? 1 : 2) + (i >= 30 ? 100 : 0));
		const b = unwrap(computeBaseline(values));
		// Hand computation: 15 ones and 15 twos -> mean 1.5; every moving range is 1.
		expect(b.individualsChart.pointCount).toBe(30);
		expect(b.limits.shewhart.centerLine).toBeCloseTo(1.5, 12);
		expect(b.individualsChart.movingRangeMean).toBeCloseTo(1, 12);
		expect(b.limits.ewma?.target).toBeCloseTo(1.5, 12);
		expect(b.limits.cusum?.sigma).toBeCloseTo(b.individualsChart.sigmaWithin, 12);
	});
	test('an engineer selection overrides baselineParts', () => {
		const values = [5, 7, 5, 7, 100, 5, 7];
		const b = unwrap(computeBaseline(values, { selection: { exclusions: [{ index: 4, reason: 'mis-seated part' }] } }));
		expect(b.limits.shewhart.centerLine).toBeCloseTo(6, 12);
	});
});
