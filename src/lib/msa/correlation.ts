/**
 * Station correlation: the same parts measured on two or more stations. Each station's reading of
 * a part is the mean of its trials; a station is compared with another (or with the mean of all
 * stations) through the per-part differences, so part-to-part variation cancels (paired design).
 *
 * - Absolute bias: mean of d_i = station_i - reference_i with a Student-t confidence interval
 *   mean +/- t(1 - (1 - confidence)/2, n - 1) s_d / sqrt(n), and the paired t-test
 *   t = mean / (s_d / sqrt(n)) on n - 1 df, two-sided p.
 * - Relative bias (%): the same statistics on 100 d_i / reference_i, so a station that reads
 *   0.3 % high on every part shows +0.3 % whatever the part's value. Only defined when every
 *   reference part mean is > 0 (a ratio-scale quantity such as a capacitance); otherwise null.
 * - Versus the all-station mean: the station itself is part of that reference, so its
 *   differences are (S - 1)/S of the average pair difference and the tests of different stations
 *   are not independent; it answers "which station sits off the fleet", not a formal test.
 */
import { fUpperTailAccurate, tQuantile } from '../stats/distributions';
import { buildLayout, mean, requireLevels, sampleVariance } from './design';
import type { MsaResult, MsaRow } from './types';

export interface IntervalEstimate {
	mean: number;
	/** Sample standard deviation of the per-part differences. */
	stdDev: number;
	ciLow: number;
	ciHigh: number;
}

export interface PairedTTest {
	/** null when the differences have zero spread (t unbounded, or 0/0). */
	t: number | null;
	df: number;
	/** Two-sided p; 0 when t is unbounded (constant non-zero difference), null when all differences are 0. */
	p: number | null;
}

export interface BiasComparison {
	station: string;
	/** The other station, or null for the all-station mean. */
	reference: string | null;
	nParts: number;
	/** station - reference, in measurement units. */
	absolute: IntervalEstimate;
	/** 100 (station - reference) / reference, in %; null unless every reference mean is > 0. */
	relativePct: IntervalEstimate | null;
	/** Paired t-test of the absolute differences against 0. */
	pairedT: PairedTTest;
}

export interface CorrelationOptions {
	/** Confidence level of the intervals, in (0, 1); default 0.95. */
	confidence?: number;
}

export interface StationCorrelation {
	design: { parts: string[]; stations: string[]; trials: number[] };
	settings: { confidence: number };
	/** Mean of the trials per part for each station, in the order of design.parts. */
	partMeans: { station: string; means: number[] }[];
	/** Every unordered pair (i < j in design.stations order), as station i minus station j. */
	pairs: BiasComparison[];
	/** Each station minus the per-part mean of all stations. */
	versusAllStations: BiasComparison[];
}

function interval(diffs: readonly number[], tCrit: number): IntervalEstimate {
	const m = mean(diffs);
	const sd = Math.sqrt(Math.max(0, sampleVariance(diffs)));
	const half = (tCrit * sd) / Math.sqrt(diffs.length);
	return { mean: m, stdDev: sd, ciLow: m - half, ciHigh: m + half };
}

function pairedT(est: IntervalEstimate, n: number): PairedTTest {
	const df = n - 1;
	if (!(est.stdDev > 0)) {
		return { t: null, df, p: est.mean === 0 ? null : 0 };
	}
	const t = est.mean / (est.stdDev / Math.sqrt(n));
	// t^2 ~ F(1, df): the F lower-tail route keeps tiny p-values exact where 1 - cdf(t) rounds.
	const p = fUpperTailAccurate(t * t, 1, df);
	return { t, df, p: Number.isFinite(p) ? p : null };
}

function compare(
	station: string,
	reference: string | null,
	stationMeans: readonly number[],
	referenceMeans: readonly number[],
	tCrit: number
): BiasComparison {
	const diffs = stationMeans.map((v, i) => v - (referenceMeans[i] ?? 0));
	const absolute = interval(diffs, tCrit);
	const relative = referenceMeans.every((r) => r > 0)
		? interval(
				diffs.map((d, i) => (100 * d) / (referenceMeans[i] ?? 1)),
				tCrit
			)
		: null;
	return {
		station,
		reference,
		nParts: diffs.length,
		absolute,
		relativePct: relative,
		pairedT: pairedT(absolute, diffs.length)
	};
}

/**
 * Station-to-station bias. Assumes rows of one characteristic where every station measured the
 * same parts the same number of times (balanced; one trial is enough), with at least 2 parts and
 * 2 stations; other input or a confidence outside (0, 1) comes back as a typed error.
 */
export function stationCorrelation(
	rows: readonly MsaRow[],
	options: CorrelationOptions = {}
): MsaResult<StationCorrelation> {
	const confidence = options.confidence ?? 0.95;
	if (!(Number.isFinite(confidence) && confidence > 0 && confidence < 1)) {
		return { ok: false, error: { code: 'invalid-option', message: 'confidence must be in (0, 1).' } };
	}
	const built = buildLayout(rows);
	if (!built.ok) return built;
	const layout = built.value;
	const levelError = requireLevels(layout, { parts: 2, appraisers: 2, trials: 1 }, 'Station correlation');
	if (levelError) return { ok: false, error: levelError };

	const nParts = layout.parts.length;
	const tCrit = tQuantile(1 - (1 - confidence) / 2, nParts - 1);
	const partMeans = layout.appraisers.map((station, s) => ({
		station,
		means: layout.values.map((byStation) => mean(byStation[s] ?? []))
	}));
	const fleetMeans = layout.parts.map((_, p) => mean(partMeans.map((s) => s.means[p] ?? 0)));

	const pairs: BiasComparison[] = [];
	for (let i = 0; i < partMeans.length; i++) {
		for (let j = i + 1; j < partMeans.length; j++) {
			const a = partMeans[i];
			const b = partMeans[j];
			if (a && b) pairs.push(compare(a.station, b.station, a.means, b.means, tCrit));
		}
	}
	const versusAllStations = partMeans.map((s) => compare(s.station, null, s.means, fleetMeans, tCrit));

	return {
		ok: true,
		value: {
			design: { parts: layout.parts, stations: layout.appraisers, trials: layout.trials },
			settings: { confidence },
			partMeans,
			pairs,
			versusAllStations
		}
	};
}
