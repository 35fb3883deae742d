/**
 * Control limits for the charts Biasline draws, all at the conventional 3 sigma:
 *
 * - Individuals and moving range (I-MR), moving range of span 2, sigma = MRbar / d2(2)
 *   (NIST/SEMATECH e-Handbook 6.3.2.2).
 * - X-bar/R and X-bar/S over subgroups of n consecutive parts (constants from constants.ts).
 * - p-chart of yield with variable subgroup size: limits pbar +- 3 sqrt(pbar(1-pbar)/n_i),
 *   clipped to [0, 1].
 * - EWMA with exact time-varying limits; defaults lambda = 0.2, L = 3.
 * - Tabular CUSUM with upper and lower sums; defaults k = 0.5 sigma, h = 5 sigma.
 *
 * Baselines: by default the first DEFAULT_BASELINE_PARTS (30) parts set the limits; an
 * engineer may instead choose a range and exclude points, each with a reason.
 */
import { controlChartConstants } from './constants';
import type {
	BaselineSelection,
	ChartRuleLimits,
	CusumParameters,
	EwmaParameters,
	ShewhartLimits,
	SpcResult
} from './types';
import { checkAllFinite, fail, firstNonFinite, resolveSelection, succeed } from './validation';

export const DEFAULT_BASELINE_PARTS = 30;
export const DEFAULT_EWMA_LAMBDA = 0.2;
export const DEFAULT_EWMA_LIMIT_WIDTH_SIGMA = 3;
export const DEFAULT_CUSUM_REFERENCE_K = 0.5;
export const DEFAULT_CUSUM_DECISION_H = 5;

const SIGMA_WIDTH = 3;

export interface IndividualsChart {
	readonly individuals: ShewhartLimits;
	readonly movingRange: ShewhartLimits;
	readonly mean: number;
	readonly movingRangeMean: number;
	/** Within (short-term) sigma of one part, MRbar / d2 with d2 for n = 2. */
	readonly sigmaWithin: number;
	readonly pointCount: number;
	readonly movingRangeCount: number;
	readonly includedIndices: readonly number[];
}

/**
 * I-MR limits from the selected points. Assumes values are in production order. A moving
 * range is taken only between two neighbouring points that are both included, because
 * bridging an excluded point would mix parts that were not made one after the other.
 */
export function individualsLimits(values: readonly number[], selection?: BaselineSelection): SpcResult<IndividualsChart> {
	if (values.length === 0) return fail('EMPTY_SERIES', 'no values');
	const resolved = resolveSelection(values.length, selection);
	if (!resolved.ok) return resolved;
	const { included, excluded } = resolved.value;
	const bad = firstNonFinite(values, included);
	if (bad) return { ok: false, error: bad };
	if (included.length < 2) return fail('TOO_FEW_POINTS', `I-MR limits need at least 2 included points, got ${included.length}`);
	let sum = 0;
	for (const i of included) sum += values[i] ?? 0;
	const mean = sum / included.length;
	let mrSum = 0;
	let mrCount = 0;
	for (const i of included) {
		if (i === resolved.value.fromIndex || excluded.has(i - 1)) continue;
		mrSum += Math.abs((values[i] ?? 0) - (values[i - 1] ?? 0));
		mrCount++;
	}
	if (mrCount === 0) return fail('TOO_FEW_POINTS', 'no two neighbouring included points, so no moving range');
	const movingRangeMean = mrSum / mrCount;
	if (!(movingRangeMean > 0)) return fail('ZERO_SIGMA', 'all moving ranges are zero; limits would collapse onto the mean');
	const k = controlChartConstants(2);
	if (!k.ok) return k;
	const sigmaWithin = movingRangeMean / k.value.d2;
	return succeed({
		individuals: {
			centerLine: mean,
			upperControlLimit: mean + SIGMA_WIDTH * sigmaWithin,
			lowerControlLimit: mean - SIGMA_WIDTH * sigmaWithin,
			sigma: sigmaWithin
		},
		movingRange: {
			centerLine: movingRangeMean,
			upperControlLimit: k.value.D4 * movingRangeMean,
			lowerControlLimit: k.value.D3 * movingRangeMean,
			sigma: k.value.d3 * sigmaWithin
		},
		mean,
		movingRangeMean,
		sigmaWithin,
		pointCount: included.length,
		movingRangeCount: mrCount,
		includedIndices: included
	});
}

/** Moving ranges of span 2; entry i is |x[i] - x[i-1]|, entry 0 is null. Assumes finite values. */
export function movingRanges(values: readonly number[]): (number | null)[] {
	return values.map((v, i) => (i === 0 ? null : Math.abs(v - (values[i - 1] ?? v))));
}

export interface SubgroupStatistics {
	readonly startIndex: number;
	readonly mean: number;
	readonly range: number;
	readonly standardDeviation: number;
}

export interface SubgroupChart {
	readonly xbar: ShewhartLimits;
	/** R chart for xbarR, S chart for xbarS. */
	readonly dispersion: ShewhartLimits;
	readonly grandMean: number;
	/** Rbar for xbarR, Sbar for xbarS. */
	readonly dispersionMean: number;
	readonly sigmaWithin: number;
	readonly subgroupSize: number;
	readonly subgroups: readonly SubgroupStatistics[];
}

function subgroupStats(values: readonly number[], start: number, n: number): SubgroupStatistics {
	let sum = 0;
	let min = Infinity;
	let max = -Infinity;
	for (let j = start; j < start + n; j++) {
		const v = values[j] ?? 0;
		sum += v;
		if (v < min) min = v;
		if (v > max) max = v;
	}
	const mean = sum / n;
	let ss = 0;
	for (let j = start; j < start + n; j++) ss += ((values[j] ?? 0) - mean) ** 2;
	return { startIndex: start, mean, range: max - min, standardDeviation: Math.sqrt(ss / (n - 1)) };
}

/**
 * Splits the selected range into consecutive subgroups of n parts starting at fromIndex.
 * Assumes production order. A trailing incomplete subgroup is ignored, and a subgroup that
 * contains an excluded part is dropped whole, so every subgroup keeps exactly n parts.
 */
export function formSubgroups(
	values: readonly number[],
	subgroupSize: number,
	selection?: BaselineSelection
): SpcResult<SubgroupStatistics[]> {
	if (values.length === 0) return fail('EMPTY_SERIES', 'no values');
	const k = controlChartConstants(subgroupSize);
	if (!k.ok) return k;
	const resolved = resolveSelection(values.length, selection);
	if (!resolved.ok) return resolved;
	const { fromIndex, toIndex, excluded } = resolved.value;
	const groups: SubgroupStatistics[] = [];
	for (let start = fromIndex; start + subgroupSize <= toIndex; start += subgroupSize) {
		let hasExcluded = false;
		const indices: number[] = [];
		for (let j = start; j < start + subgroupSize; j++) {
			if (excluded.has(j)) hasExcluded = true;
			indices.push(j);
		}
		if (hasExcluded) continue;
		const bad = firstNonFinite(values, indices);
		if (bad) return { ok: false, error: bad };
		groups.push(subgroupStats(values, start, subgroupSize));
	}
	return succeed(groups);
}

function checkSummary(grandMean: number, dispersionMean: number): SpcResult<null> {
	if (!Number.isFinite(grandMean) || !Number.isFinite(dispersionMean)) {
		return fail('NON_FINITE_VALUE', 'summary statistics must be finite');
	}
	if (!(dispersionMean > 0)) return fail('ZERO_SIGMA', 'mean range or standard deviation must be positive');
	return succeed(null);
}

/**
 * X-bar and R limits from summary statistics (grand mean, mean range, subgroup size).
 * Assumes the subgroups were rational (consecutive parts) and of equal size n.
 */
export function xbarRLimitsFromSummary(
	grandMean: number,
	rangeMean: number,
	subgroupSize: number
): SpcResult<Omit<SubgroupChart, 'subgroups'>> {
	const k = controlChartConstants(subgroupSize);
	if (!k.ok) return k;
	const check = checkSummary(grandMean, rangeMean);
	if (!check.ok) return check;
	const c = k.value;
	const sigmaWithin = rangeMean / c.d2;
	return succeed({
		xbar: {
			centerLine: grandMean,
			upperControlLimit: grandMean + c.A2 * rangeMean,
			lowerControlLimit: grandMean - c.A2 * rangeMean,
			sigma: sigmaWithin / Math.sqrt(subgroupSize)
		},
		dispersion: {
			centerLine: rangeMean,
			upperControlLimit: c.D4 * rangeMean,
			lowerControlLimit: c.D3 * rangeMean,
			sigma: c.d3 * sigmaWithin
		},
		grandMean,
		dispersionMean: rangeMean,
		sigmaWithin,
		subgroupSize
	});
}

/**
 * X-bar and S limits from summary statistics (grand mean, mean subgroup SD, subgroup size).
 * Assumes equal subgroup sizes; SDs use the n - 1 divisor.
 */
export function xbarSLimitsFromSummary(
	grandMean: number,
	sdMean: number,
	subgroupSize: number
): SpcResult<Omit<SubgroupChart, 'subgroups'>> {
	const k = controlChartConstants(subgroupSize);
	if (!k.ok) return k;
	const check = checkSummary(grandMean, sdMean);
	if (!check.ok) return check;
	const c = k.value;
	const sigmaWithin = sdMean / c.c4;
	return succeed({
		xbar: {
			centerLine: grandMean,
			upperControlLimit: grandMean + c.A3 * sdMean,
			lowerControlLimit: grandMean - c.A3 * sdMean,
			sigma: sigmaWithin / Math.sqrt(subgroupSize)
		},
		dispersion: {
			centerLine: sdMean,
			upperControlLimit: c.B4 * sdMean,
			lowerControlLimit: c.B3 * sdMean,
			sigma: sigmaWithin * Math.sqrt(1 - c.c4 * c.c4)
		},
		grandMean,
		dispersionMean: sdMean,
		sigmaWithin,
		subgroupSize
	});
}

function subgroupLimits(
	values: readonly number[],
	subgroupSize: number,
	selection: BaselineSelection | undefined,
	kind: 'range' | 'sd'
): SpcResult<SubgroupChart> {
	const groups = formSubgroups(values, subgroupSize, selection);
	if (!groups.ok) return groups;
	const g = groups.value;
	if (g.length < 2) return fail('TOO_FEW_POINTS', `need at least 2 complete subgroups, got ${g.length}`);
	const grandMean = g.reduce((a, s) => a + s.mean, 0) / g.length;
	const dispersionMean = g.reduce((a, s) => a + (kind === 'range' ? s.range : s.standardDeviation), 0) / g.length;
	const limits =
		kind === 'range'
			? xbarRLimitsFromSummary(grandMean, dispersionMean, subgroupSize)
			: xbarSLimitsFromSummary(grandMean, dispersionMean, subgroupSize);
	if (!limits.ok) return limits;
	return succeed({ ...limits.value, subgroups: g });
}

/** X-bar/R limits from raw values in subgroups of n consecutive parts; see formSubgroups. */
export function xbarRLimits(values: readonly number[], subgroupSize: number, selection?: BaselineSelection): SpcResult<SubgroupChart> {
	return subgroupLimits(values, subgroupSize, selection, 'range');
}

/** X-bar/S limits from raw values in subgroups of n consecutive parts; see formSubgroups. */
export function xbarSLimits(values: readonly number[], subgroupSize: number, selection?: BaselineSelection): SpcResult<SubgroupChart> {
	return subgroupLimits(values, subgroupSize, selection, 'sd');
}

// ---------------------------------------------------------------- p-chart of yield

export interface PassFailCounts {
	readonly failCount: number;
	readonly testedCount: number;
}

export interface TimedPassFailCounts extends PassFailCounts {
	readonly startMs: number;
}

export type PChartStatistic = 'yield' | 'fraction-failing';

export interface PChartPoint {
	readonly index: number;
	readonly value: number;
	readonly limits: ShewhartLimits;
	readonly beyond: 'above' | 'below' | null;
}

export interface PChart {
	readonly statistic: PChartStatistic;
	/** Baseline fraction failing, pbar = sum of fails / sum tested over the selection. */
	readonly fractionFailingMean: number;
	readonly centerLine: number;
	readonly points: readonly PChartPoint[];
}

function checkCounts(counts: readonly PassFailCounts[]): SpcResult<null> {
	for (let i = 0; i < counts.length; i++) {
		const c = counts[i];
		if (!c || !Number.isInteger(c.failCount) || !Number.isInteger(c.testedCount) || c.testedCount < 1 || c.failCount < 0 || c.failCount > c.testedCount) {
			return fail('INVALID_COUNTS', `subgroup ${i}: need integers 0 <= failCount <= testedCount, testedCount >= 1`);
		}
	}
	return succeed(null);
}

/** p-chart limits for one subgroup of `testedCount` parts. Assumes 0 < pbar < 1 and testedCount >= 1. */
export function pChartLimitsFor(fractionFailingMean: number, testedCount: number, statistic: PChartStatistic = 'yield'): ShewhartLimits {
	const p = fractionFailingMean;
	const sigma = Math.sqrt((p * (1 - p)) / testedCount);
	const upper = Math.min(1, p + SIGMA_WIDTH * sigma);
	const lower = Math.max(0, p - SIGMA_WIDTH * sigma);
	if (statistic === 'fraction-failing') return { centerLine: p, upperControlLimit: upper, lowerControlLimit: lower, sigma };
	return { centerLine: 1 - p, upperControlLimit: 1 - lower, lowerControlLimit: 1 - upper, sigma };
}

/**
 * p-chart over subgroups of pass/fail counts (per hour or per N parts), variable subgroup
 * size allowed. The centre line comes from the selected subgroups; every subgroup is then
 * plotted with its own limits. Charts yield (1 - p) by default. A baseline with no failures
 * or only failures gives ZERO_SIGMA, since its limits would have zero width.
 */
export function pChart(
	counts: readonly PassFailCounts[],
	options: { readonly selection?: BaselineSelection; readonly statistic?: PChartStatistic } = {}
): SpcResult<PChart> {
	if (counts.length === 0) return fail('EMPTY_SERIES', 'no subgroups');
	const valid = checkCounts(counts);
	if (!valid.ok) return valid;
	const resolved = resolveSelection(counts.length, options.selection);
	if (!resolved.ok) return resolved;
	if (resolved.value.included.length === 0) return fail('TOO_FEW_POINTS', 'no subgroups selected');
	let fails = 0;
	let tested = 0;
	for (const i of resolved.value.included) {
		fails += counts[i]?.failCount ?? 0;
		tested += counts[i]?.testedCount ?? 0;
	}
	const p = fails / tested;
	if (!(p > 0 && p < 1)) return fail('ZERO_SIGMA', `baseline fraction failing is ${p}; p-chart limits would have zero width`);
	const statistic = options.statistic ?? 'yield';
	const points = counts.map((c, index): PChartPoint => {
		const fraction = c.failCount / c.testedCount;
		const value = statistic === 'yield' ? 1 - fraction : fraction;
		const limits = pChartLimitsFor(p, c.testedCount, statistic);
		const beyond = value > limits.upperControlLimit ? 'above' : value < limits.lowerControlLimit ? 'below' : null;
		return { index, value, limits, beyond };
	});
	return succeed({ statistic, fractionFailingMean: p, centerLine: statistic === 'yield' ? 1 - p : p, points });
}

/**
 * Groups pass/fail results into subgroups of N consecutive parts, in order. Assumes
 * production order; the trailing incomplete subgroup is left out because it is still filling.
 */
export function groupByParts(passed: readonly boolean[], partsPerSubgroup: number): SpcResult<PassFailCounts[]> {
	if (!Number.isInteger(partsPerSubgroup) || partsPerSubgroup < 1) {
		return fail('INVALID_SUBGROUP_SIZE', `parts per subgroup must be a positive integer, got ${partsPerSubgroup}`);
	}
	const out: PassFailCounts[] = [];
	for (let start = 0; start + partsPerSubgroup <= passed.length; start += partsPerSubgroup) {
		let failCount = 0;
		for (let j = start; j < start + partsPerSubgroup; j++) if (passed[j] === false) failCount++;
		out.push({ failCount, testedCount: partsPerSubgroup });
	}
	return succeed(out);
}

/**
 * Groups timestamped pass/fail results into clock intervals of `intervalMs` (default one
 * hour) aligned to multiples of intervalMs since the epoch; empty intervals are omitted.
 * Time is passed in as data, so the caller decides which clock the timestamps come from.
 */
export function groupByInterval(
	records: readonly { readonly timeMs: number; readonly passed: boolean }[],
	intervalMs = 3_600_000
): SpcResult<TimedPassFailCounts[]> {
	if (!(Number.isFinite(intervalMs) && intervalMs > 0)) return fail('INVALID_PARAMETER', 'interval must be a positive number of ms');
	const bins = new Map<number, { failCount: number; testedCount: number }>();
	for (let i = 0; i < records.length; i++) {
		const r = records[i];
		if (!r || !Number.isFinite(r.timeMs)) return fail('NON_FINITE_VALUE', `record ${i} has no finite timestamp`);
		const start = Math.floor(r.timeMs / intervalMs) * intervalMs;
		const bin = bins.get(start) ?? { failCount: 0, testedCount: 0 };
		bin.testedCount++;
		if (!r.passed) bin.failCount++;
		bins.set(start, bin);
	}
	return succeed(
		[...bins.entries()].sort((a, b) => a[0] - b[0]).map(([startMs, b]) => ({ startMs, failCount: b.failCount, testedCount: b.testedCount }))
	);
}

// ---------------------------------------------------------------- EWMA

/**
 * Validated EWMA design. Assumes sigma is the sigma of one plotted value (for individuals,
 * MRbar/d2). Defaults lambda = 0.2 and L = 3 (common practice; NIST e-Handbook 6.3.2.4
 * quotes lambda between 0.2 and 0.3 after Hunter 1986).
 */
export function ewmaParameters(input: {
	readonly target: number;
	readonly sigma: number;
	readonly lambda?: number;
	readonly limitWidthSigma?: number;
}): SpcResult<EwmaParameters> {
	const lambda = input.lambda ?? DEFAULT_EWMA_LAMBDA;
	const limitWidthSigma = input.limitWidthSigma ?? DEFAULT_EWMA_LIMIT_WIDTH_SIGMA;
	if (!Number.isFinite(input.target)) return fail('NON_FINITE_VALUE', 'EWMA target must be finite');
	if (!(Number.isFinite(input.sigma) && input.sigma > 0)) return fail('ZERO_SIGMA', 'EWMA sigma must be positive and finite');
	if (!(lambda > 0 && lambda <= 1)) return fail('INVALID_PARAMETER', `EWMA lambda must be in (0, 1], got ${lambda}`);
	if (!(Number.isFinite(limitWidthSigma) && limitWidthSigma > 0)) return fail('INVALID_PARAMETER', 'EWMA L must be positive');
	return succeed({ target: input.target, sigma: input.sigma, lambda, limitWidthSigma });
}

/**
 * Exact EWMA limits after `pointNumber` points (1-based):
 * target +- L sigma sqrt(lambda/(2-lambda) (1 - (1-lambda)^(2i))). Assumes validated parameters.
 */
export function ewmaLimitsAt(params: EwmaParameters, pointNumber: number): { upper: number; lower: number; sigmaEwma: number } {
	const { lambda, sigma, target, limitWidthSigma } = params;
	const sigmaEwma = sigma * Math.sqrt((lambda / (2 - lambda)) * (1 - (1 - lambda) ** (2 * pointNumber)));
	return { upper: target + limitWidthSigma * sigmaEwma, lower: target - limitWidthSigma * sigmaEwma, sigmaEwma };
}

/** One EWMA update z = lambda x + (1 - lambda) z_prev; assumes finite inputs. */
export function ewmaUpdate(params: EwmaParameters, previous: number, value: number): number {
	return params.lambda * value + (1 - params.lambda) * previous;
}

export interface EwmaPoint {
	readonly index: number;
	readonly value: number;
	readonly ewma: number;
	readonly upperControlLimit: number;
	readonly lowerControlLimit: number;
	/** Strictly outside the limits; a statistic exactly on a limit does not signal. */
	readonly beyond: 'above' | 'below' | null;
}

/** EWMA statistic and limits for a series, starting from z0 = target. Assumes production order. */
export function ewmaSeries(values: readonly number[], params: EwmaParameters): SpcResult<EwmaPoint[]> {
	const bad = checkAllFinite(values);
	if (bad) return { ok: false, error: bad };
	const out: EwmaPoint[] = [];
	let z = params.target;
	values.forEach((value, index) => {
		z = ewmaUpdate(params, z, value);
		const lim = ewmaLimitsAt(params, index + 1);
		out.push({
			index,
			value,
			ewma: z,
			upperControlLimit: lim.upper,
			lowerControlLimit: lim.lower,
			beyond: z > lim.upper ? 'above' : z < lim.lower ? 'below' : null
		});
	});
	return succeed(out);
}

// ---------------------------------------------------------------- CUSUM

/**
 * Validated tabular CUSUM design; k and h are in sigmas. Defaults k = 0.5, h = 5
 * (Montgomery & Runger, Applied Statistics and Probability for Engineers, 3rd ed., 16-10:
 * h = 4 or 5 with k = 1/2 detects a shift of about one sigma).
 */
export function cusumParameters(input: {
	readonly target: number;
	readonly sigma: number;
	readonly referenceK?: number;
	readonly decisionH?: number;
}): SpcResult<CusumParameters> {
	const referenceK = input.referenceK ?? DEFAULT_CUSUM_REFERENCE_K;
	const decisionH = input.decisionH ?? DEFAULT_CUSUM_DECISION_H;
	if (!Number.isFinite(input.target)) return fail('NON_FINITE_VALUE', 'CUSUM target must be finite');
	if (!(Number.isFinite(input.sigma) && input.sigma > 0)) return fail('ZERO_SIGMA', 'CUSUM sigma must be positive and finite');
	if (!(Number.isFinite(referenceK) && referenceK >= 0)) return fail('INVALID_PARAMETER', 'CUSUM k must be >= 0');
	if (!(Number.isFinite(decisionH) && decisionH > 0)) return fail('INVALID_PARAMETER', 'CUSUM h must be > 0');
	return succeed({ target: input.target, sigma: input.sigma, referenceK, decisionH });
}

/**
 * One tabular CUSUM step: C+ = max(0, x - (target + K) + C+prev), C- = max(0, (target - K) - x + C-prev),
 * K = k sigma. Assumes finite inputs.
 */
export function cusumUpdate(params: CusumParameters, upper: number, lower: number, value: number): { upper: number; lower: number } {
	const bigK = params.referenceK * params.sigma;
	return {
		upper: Math.max(0, value - (params.target + bigK) + upper),
		lower: Math.max(0, params.target - bigK - value + lower)
	};
}

export interface CusumPoint {
	readonly index: number;
	readonly value: number;
	readonly upper: number;
	readonly lower: number;
	/** The sum exceeds H = h sigma strictly; the sums are not reset after a signal. */
	readonly signalUpper: boolean;
	readonly signalLower: boolean;
}

/** Tabular CUSUM sums for a series, both starting at 0. Assumes production order. */
export function cusumSeries(values: readonly number[], params: CusumParameters): SpcResult<CusumPoint[]> {
	const bad = checkAllFinite(values);
	if (bad) return { ok: false, error: bad };
	const bigH = params.decisionH * params.sigma;
	let upper = 0;
	let lower = 0;
	return succeed(
		values.map((value, index) => {
			({ upper, lower } = cusumUpdate(params, upper, lower, value));
			return { index, value, upper, lower, signalUpper: upper > bigH, signalLower: lower > bigH };
		})
	);
}

// ---------------------------------------------------------------- baseline

export interface BaselineOptions {
	/** Parts that set the limits when no selection is given; default 30. */
	readonly baselineParts?: number;
	/** An engineer's chosen range and exclusions; overrides baselineParts. */
	readonly selection?: BaselineSelection;
	readonly ewmaLambda?: number;
	readonly ewmaLimitWidthSigma?: number;
	readonly cusumReferenceK?: number;
	readonly cusumDecisionH?: number;
}

export interface Baseline {
	readonly limits: ChartRuleLimits;
	readonly individualsChart: IndividualsChart;
}

/**
 * Frozen limits for an individuals chart plus its EWMA and CUSUM, all centred on the
 * baseline mean with sigma = MRbar/d2. Assumes values are one characteristic of one
 * station x product in production order. Without a selection it needs at least
 * `baselineParts` values and uses exactly the first that many.
 */
export function computeBaseline(values: readonly number[], options: BaselineOptions = {}): SpcResult<Baseline> {
	const baselineParts = options.baselineParts ?? DEFAULT_BASELINE_PARTS;
	if (!Number.isInteger(baselineParts) || baselineParts < 2) return fail('INVALID_PARAMETER', 'baselineParts must be an integer >= 2');
	let selection = options.selection;
	if (!selection) {
		if (values.length < baselineParts) {
			return fail('TOO_FEW_POINTS', `baseline needs ${baselineParts} parts, have ${values.length}`);
		}
		selection = { fromIndex: 0, toIndex: baselineParts };
	}
	const chart = individualsLimits(values, selection);
	if (!chart.ok) return chart;
	const { mean, sigmaWithin } = chart.value;
	const ewma = ewmaParameters({ target: mean, sigma: sigmaWithin, lambda: options.ewmaLambda, limitWidthSigma: options.ewmaLimitWidthSigma });
	if (!ewma.ok) return ewma;
	const cusum = cusumParameters({ target: mean, sigma: sigmaWithin, referenceK: options.cusumReferenceK, decisionH: options.cusumDecisionH });
	if (!cusum.ok) return cusum;
	return succeed({
		limits: { shewhart: chart.value.individuals, ewma: ewma.value, cusum: cusum.value },
		individualsChart: chart.value
	});
}
