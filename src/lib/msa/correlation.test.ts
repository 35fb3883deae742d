import { describe, expect, test } from 'vitest';
import { stationCorrelation, type StationCorrelation } from './correlation';
import { loadExample } from './testing/reference-fixtures';
import { nonFiniteNumbers } from './testing/expect-printed';
import type { MsaRow } from './types';

function correlate(rows: MsaRow[], options: Parameters<typeof stationCorrelation>[1] = {}): StationCorrelation {
	const result = stationCorrelation(rows, options);
	if (!result.ok) throw new Error(`unexpected error ${result.error.code}: ${result.error.message}`);
	expect(nonFiniteNumbers(result.value)).toEqual([]);
	return result.value;
}

function rowsOf(table: Record<string, Record<string, number[]>>): MsaRow[] {
	return Object.entries(table).flatMap(([appraiser, parts]) =>
		Object.entries(parts).flatMap(([part, values]) =>
			values.map((value, i) => ({ part, appraiser, trial: i + 1, value }))
		)
	);
}

// Independent hand computation of the paired t from its definition, with 3 parts (df = 2), where
// Student's t has closed forms (recalled from memory): two-sided P(|T| > t) = 1 - t / sqrt(2 + t^2),
// quantile t_p = (2p - 1) / sqrt(2 p (1 - p)); t_0.975 = 4.3027, which agrees with 4.303 in the
// NIST/SEMATECH e-Handbook 1.3.6.7.2 t table (df = 2).
// Station S1 trial means 10.0, 20.0, 30.0 (two trials each); S2 10.1, 20.0, 30.2.
// d = S1 - S2 = -0.1, 0.0, -0.2: mean -0.1, s_d = sqrt((0 + 0.01 + 0.01)/2) = 0.1,
// t = -0.1 / (0.1 / sqrt 3) = -sqrt 3.
describe('paired comparison by hand, 3 parts x 2 stations x 2 trials', () => {
	const rows = rowsOf({
		S1: { a: [9.9, 10.1], b: [19.8, 20.2], c: [30.1, 29.9] },
		S2: { a: [10.0, 10.2], b: [20.0, 20.0], c: [30.3, 30.1] }
	});
	const out = correlate(rows);
	const pair = out.pairs[0];
	const tHand = -Math.sqrt(3);
	const pHand = 1 - Math.sqrt(3) / Math.sqrt(2 + 3);
	const tCrit = (2 * 0.975 - 1) / Math.sqrt(2 * 0.975 * 0.025);

	test('one pair S1 vs S2 with per-part means', () => {
		expect(out.pairs).toHaveLength(1);
		expect(pair?.station).toBe('S1');
		expect(pair?.reference).toBe('S2');
		expect(out.partMeans[1]?.means.map((m) => Number(m.toFixed(10)))).toEqual([10.1, 20, 30.2]);
		expect(tCrit).toBeCloseTo(4.303, 3);
	});
	test('absolute bias, 95 % CI, t, df, p', () => {
		expect(pair?.absolute.mean).toBeCloseTo(-0.1, 12);
		expect(pair?.absolute.stdDev).toBeCloseTo(0.1, 12);
		expect(pair?.absolute.ciLow).toBeCloseTo(-0.1 - (tCrit * 0.1) / Math.sqrt(3), 6);
		expect(pair?.absolute.ciHigh).toBeCloseTo(-0.1 + (tCrit * 0.1) / Math.sqrt(3), 6);
		expect(pair?.pairedT.t).toBeCloseTo(tHand, 10);
		expect(pair?.pairedT.df).toBe(2);
		expect(pair?.pairedT.p).toBeCloseTo(pHand, 8);
	});
	test('relative bias: mean of 100 d_i / S2_i', () => {
		const rel = [(-0.1 / 10.1) * 100, 0, (-0.2 / 30.2) * 100];
		const m = rel.reduce((sum, x) => sum + x, 0) / rel.length;
		expect(pair?.relativePct?.mean).toBeCloseTo(m, 10);
	});
	// Algebra: with two stations the fleet mean is (S1 + S2)/2, so S1 - fleet = (S1 - S2)/2;
	// the mean halves and t is unchanged.
	test('versus the all-station mean: half the pair difference, same t', () => {
		const v = out.versusAllStations[0];
		expect(v?.reference).toBeNull();
		expect(v?.absolute.mean).toBeCloseTo(-0.05, 12);
		expect(v?.pairedT.t).toBeCloseTo(tHand, 10);
		expect(out.versusAllStations[1]?.absolute.mean).toBeCloseTo(0.05, 12);
	});
	test('a 90 % interval is narrower (t_0.95, df 2 = 2.920, NIST 1.3.6.7.2)', () => {
		const ninety = correlate(rows, { confidence: 0.9 });
		const half = (ninety.pairs[0]?.absolute.ciHigh ?? 0) - (ninety.pairs[0]?.absolute.mean ?? 0);
		expect(half).toBeCloseTo((2.92 * 0.1) / Math.sqrt(3), 3);
	});
});

// Published paired example: Box, Hunter & Hunter, Statistics for Experimenters (Wiley 1978),
// p. 100, boys' shoe-sole wear, materials A and B on the same 10 boys (data set cited by the
// SMPracticals R package, `shoe`, https://rdrr.io/cran/SMPracticals/man/shoe.html). Data values
// and R's t.test(B, A, paired = TRUE) output (t = 3.3489, df = 9, p-value = 0.008539, 95 % CI
// 0.1330461 to 0.6869539, mean difference 0.41) are recalled from memory; a public statement of
// the exercise gives the mean difference 0.41 and s_d 0.387.
describe('paired t on the shoe-wear data (Box, Hunter & Hunter 1978), materials as stations', () => {
	const a = [13.2, 8.2, 10.9, 14.3, 10.7, 6.6, 9.5, 10.8, 8.8, 13.3];
	const b = [14.0, 8.8, 11.2, 14.2, 11.8, 6.4, 9.8, 11.3, 9.3, 13.6];
	const rows: MsaRow[] = [
		...b.map((value, i) => ({ part: `boy${i + 1}`, appraiser: 'B', trial: 1, value })),
		...a.map((value, i) => ({ part: `boy${i + 1}`, appraiser: 'A', trial: 1, value }))
	];
	const pair = correlate(rows).pairs[0];
	test('B - A: mean 0.41, s_d 0.387, t 3.3489, df 9, p 0.008539, CI 0.1330 to 0.6870', () => {
		expect(pair?.station).toBe('B');
		expect(pair?.absolute.mean).toBeCloseTo(0.41, 10);
		expect(pair?.absolute.stdDev).toBeCloseTo(0.387, 3);
		expect(pair?.pairedT.t).toBeCloseTo(3.3489, 4);
		expect(pair?.pairedT.df).toBe(9);
		expect(pair?.pairedT.p).toBeCloseTo(0.008539, 6);
		expect(pair?.absolute.ciLow).toBeCloseTo(0.1330461, 6);
		expect(pair?.absolute.ciHigh).toBeCloseTo(0.6869539, 6);
	});
});

// Definition check: a station reading exactly 0.3 % high on every part has relative bias 0.3 %
// with (numerically) zero spread, and its absolute bias is 0.003 x the mean part value.
describe('a station that reads 0.3 % high', () => {
	const ref = [4.7, 12.0, 33.0, 68.0, 120.0];
	const rows: MsaRow[] = [
		...ref.map((value, i) => ({ part: `p${i}`, appraiser: 'ST-1', trial: 1, value })),
		...ref.map((value, i) => ({ part: `p${i}`, appraiser: 'ST-2', trial: 1, value: value * 1.003 }))
	];
	const out = correlate(rows);
	test('ST-2 reads +0.3 % relative to ST-1 on every part; absolute bias 0.003 x mean part value', () => {
		const pair = out.pairs[0];
		// Pairs are first-listed station minus second: ST-1 - ST-2, so look at ST-2 via the reverse.
		expect(pair?.station).toBe('ST-1');
		expect(pair?.relativePct?.mean).toBeCloseTo(100 * (1 / 1.003 - 1), 10);
		const reversed = correlate([...rows.slice(ref.length), ...rows.slice(0, ref.length)]);
		expect(reversed.pairs[0]?.station).toBe('ST-2');
		expect(reversed.pairs[0]?.relativePct?.mean).toBeCloseTo(0.3, 10);
		expect(reversed.pairs[0]?.relativePct?.stdDev).toBeCloseTo(0, 10);
		expect(reversed.pairs[0]?.absolute.mean).toBeCloseTo((0.003 * ref.reduce((s, v) => s + v, 0)) / ref.length, 10);
	});
	test('identical stations: zero differences give t and p null, CI collapsed to 0', () => {
		const same = correlate(ref.flatMap((value, i) => ['X', 'Y'].map((appraiser) => ({ part: `p${i}`, appraiser, trial: 1, value }))));
		expect(same.pairs[0]?.pairedT).toEqual({ t: null, df: 4, p: null });
		expect(same.pairs[0]?.absolute).toEqual({ mean: 0, stdDev: 0, ciLow: 0, ciHigh: 0 });
	});
	test('constant non-zero offset: t unbounded (null), p = 0', () => {
		const shifted = correlate(ref.flatMap((value, i) => [
			{ part: `p${i}`, appraiser: 'X', trial: 1, value },
			{ part: `p${i}`, appraiser: 'Y', trial: 1, value: value + 0.5 }
		]));
		expect(shifted.pairs[0]?.pairedT.t).toBeNull();
		expect(shifted.pairs[0]?.pairedT.p).toBe(0);
		expect(shifted.pairs[0]?.absolute.mean).toBeCloseTo(-0.5, 12);
	});
});

describe('three stations and values around zero (AIAG example data, appraisers as stations)', () => {
	const { rows } = loadExample('aiag-msa-4th-average-and-range');
	const out = correlate(rows);
	test('three pairs A-B, A-C, B-C; relative bias null because reference means are not all > 0', () => {
		expect(out.pairs.map((p) => [p.station, p.reference])).toEqual([
			['A', 'B'],
			['A', 'C'],
			['B', 'C']
		]);
		expect(out.pairs.every((p) => p.relativePct === null)).toBe(true);
		expect(out.versusAllStations).toHaveLength(3);
	});
	// Reference: the sheet's appraiser averages X-bar_a 0.1903, X-bar_c -0.2543 (AIAG MSA 4th ed.
	// Fig. III-B 15, public reproduction): the mean of the per-part differences of a balanced study
	// equals the difference of the appraiser averages.
	test('mean bias A - C equals X-bar_a - X-bar_c of the AIAG data sheet (0.4446)', () => {
		expect(out.pairs[1]?.absolute.mean).toBeCloseTo(0.1903 - -0.2543, 3);
	});
});

describe('bad input gives typed errors', () => {
	const good: MsaRow[] = [
		{ part: 'a', appraiser: 'S1', trial: 1, value: 1 },
		{ part: 'b', appraiser: 'S1', trial: 1, value: 2 },
		{ part: 'a', appraiser: 'S2', trial: 1, value: 1.1 },
		{ part: 'b', appraiser: 'S2', trial: 1, value: 2.1 }
	];
	test.each<[string, string, MsaRow[], Parameters<typeof stationCorrelation>[1]]>([
		['empty', 'empty', [], {}],
		['NaN', 'non-finite-value', good.map((r, i) => (i === 2 ? { ...r, value: Number.NaN } : r)), {}],
		['one part', 'too-few-parts', good.filter((r) => r.part === 'a'), {}],
		['one station', 'too-few-appraisers', good.filter((r) => r.appraiser === 'S1'), {}],
		['unbalanced', 'unbalanced', good.slice(0, 3), {}],
		['confidence 1', 'invalid-option', good, { confidence: 1 }],
		['confidence 0', 'invalid-option', good, { confidence: 0 }],
		['confidence NaN', 'invalid-option', good, { confidence: Number.NaN }]
	])('%s -> %s', (_name, code, input, options) => {
		const result = stationCorrelation(input, options);
		expect(result.ok ? 'ok' : result.error.code).toBe(code);
	});
});
