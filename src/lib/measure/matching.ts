/**
 * Matched sets.
 *
 * Definition. A part is a vector c_i = (c_i1..c_iP) of capacitances at the P plan points. A set S
 * of exactly k distinct parts is matched at tolerance d (d = tolerancePct/100) when, at every plan
 * point j and for every part i in S,
 *     |c_ij - mean_j(S)| <= d * mean_j(S),   mean_j(S) = (1/k) sum_{i in S} c_ij.
 * The goal is as many pairwise disjoint matched sets as possible.
 *
 * Algorithm (greedy, sorted, several orders): sort the parts by ln C at the first plan point. Take
 * the smallest unassigned part a; its candidates are the following unassigned parts whose
 * capacitance at every point is within the ratio (1+d)/(1-d) of a's (a necessary condition for
 * sharing a matched set), at most WINDOW of them. Try the k-1 candidates closest to a (largest
 * relative difference over the points); if that set is not matched, try the k parts closest to
 * the mean of that first try (the set must include a). The first matched try is kept; otherwise a
 * stays unmatched. For P > 1 the pass is repeated with the parts sorted by the mean of ln C over
 * the points and by ln C at the last point (at most 3 passes, stopping early once a pass makes
 * floor(n/k) sets, which no order can beat); the pass with most sets wins.
 * Every kept set is checked against the definition before it is returned.
 *
 * Complexity: O(3 (n log n + n (SCAN P + WINDOW k))) time, O(n P) memory; 10 000 parts take
 * a few milliseconds (tests/bench/core.ts).
 *
 * Guarantees: every returned set satisfies the definition exactly (sets are disjoint, size k).
 * Optimal for one plan point and k = 2: a pair is matched iff max/min <= (1+d)/(1-d), an interval
 * condition, and pairing the smallest part with its nearest neighbour or dropping it is the
 * classic exchange-argument greedy (the first pass is that greedy; later passes only replace it
 * when they find more sets). Otherwise it is a heuristic with no proven worst-case bound
 * (the general problem is a k-set packing). Observed, and asserted in matching.test.ts: on 600
 * seeded random lots of 6-10 parts, 1-3 plan points, k = 2-3, it reaches the exhaustive optimum
 * in at least 580 lots (592 when written) and is never more than one set short.
 */
import { fail, type Failed } from './types';

/** Candidates kept per start part, and unassigned parts examined per start part (our choice). */
export const MATCHING_WINDOW = 64;
export const MATCHING_SCAN = 256;

export type MatchPart = { id: string; capacitanceF: readonly number[] };

export type MatchResult = { ok: true; sets: string[][]; unmatched: string[] } | Failed;

/** True when the parts form a matched set per the definition above (any size >= 1). */
export function isMatchedSet(vectors: readonly (readonly number[])[], tolerancePct: number): boolean {
	const k = vectors.length;
	const first = vectors[0];
	if (k === 0 || first === undefined) return false;
	const d = tolerancePct / 100;
	for (let j = 0; j < first.length; j++) {
		let sum = 0;
		for (const v of vectors) sum += v[j] ?? Number.NaN;
		const mean = sum / k;
		for (const v of vectors) {
			const c = v[j] ?? Number.NaN;
			if (!(Math.abs(c - mean) <= d * mean)) return false;
		}
	}
	return true;
}

/** Largest |ln b_j - ln a_j| over the points, from precomputed logarithms (row-major, width w). */
function maxLogDistance(logs: Float64Array, w: number, a: number, b: number): number {
	let worst = 0;
	for (let j = 0; j < w; j++) {
		const d = Math.abs((logs[b * w + j] ?? 0) - (logs[a * w + j] ?? 0));
		if (d > worst) worst = d;
	}
	return worst;
}

function maxLogDistanceTo(logs: Float64Array, w: number, centre: Float64Array, b: number): number {
	let worst = 0;
	for (let j = 0; j < w; j++) {
		const d = Math.abs((logs[b * w + j] ?? 0) - (centre[j] ?? 0));
		if (d > worst) worst = d;
	}
	return worst;
}

/**
 * Forms disjoint matched sets of `setSize` parts; assumes every part has the same number (>= 1)
 * of finite positive capacitances, in the same plan-point order. Refuses anything else.
 */
export function formMatchedSets(parts: readonly MatchPart[], setSize: number, tolerancePct: number): MatchResult {
	if (!Number.isInteger(setSize) || setSize < 2) return fail('invalid-input', 'setSize must be an integer >= 2');
	if (!(Number.isFinite(tolerancePct) && tolerancePct > 0 && tolerancePct < 100)) {
		return fail('invalid-input', 'tolerancePct must be in (0, 100)');
	}
	if (parts.length === 0) return { ok: true, sets: [], unmatched: [] };
	const width = parts[0]?.capacitanceF.length ?? 0;
	if (width === 0) return fail('empty', 'parts need at least one capacitance');
	const ids = new Set<string>();
	for (const [i, p] of parts.entries()) {
		if (p.capacitanceF.length !== width) return fail('length-mismatch', `parts.${i} has ${p.capacitanceF.length} values, expected ${width}`);
		for (const c of p.capacitanceF) {
			if (!Number.isFinite(c)) return fail('non-finite', `parts.${i} has a non-finite capacitance`);
			if (c <= 0) return fail('non-positive', `parts.${i} has a non-positive capacitance`);
		}
		if (ids.has(p.id)) return fail('invalid-input', `parts.${i}: duplicate id ${p.id}`);
		ids.add(p.id);
	}
	let best: number[][] = [];
	const n = parts.length;
	const logs = new Float64Array(n * width);
	parts.forEach((p, i) => p.capacitanceF.forEach((c, j) => (logs[i * width + j] = Math.log(c))));
	// greedy passes sorted by ln C at the first plan point, the mean of ln C and ln C at the last
	// plan point; keep the best
	const keyAt = (j: number) => Float64Array.from({ length: n }, (_, i) => logs[i * width + j] ?? 0);
	const keys: Float64Array[] = [keyAt(0)];
	if (width > 1) {
		keys.push(
			Float64Array.from({ length: n }, (_, i) => {
				let s = 0;
				for (let j = 0; j < width; j++) s += logs[i * width + j] ?? 0;
				return s / width;
			}),
			keyAt(width - 1)
		);
	}
	for (const key of keys) {
		const sets = greedyPass(parts, logs, width, setSize, tolerancePct, key);
		if (sets.length > best.length) best = sets;
		// floor(n/k) sets use every part that can be used: no other order can do better
		if (best.length === Math.floor(n / setSize)) break;
	}
	const used = new Set(best.flat());
	const sets = best.map((set) => set.map((i) => parts[i]?.id ?? ''));
	const unmatched = parts.filter((_, i) => !used.has(i)).map((p) => p.id);
	return { ok: true, sets, unmatched };
}

/** Indices of the `want` smallest distances among the first `count` candidates (ascending). */
function pickNearest(idx: Int32Array, dist: Float64Array, count: number, want: number): number[] {
	const taken = new Uint8Array(count);
	const out: number[] = [];
	for (let w = 0; w < want; w++) {
		let best = -1;
		for (let c = 0; c < count; c++) {
			if (!taken[c] && (best < 0 || (dist[c] ?? 0) < (dist[best] ?? 0))) best = c;
		}
		if (best < 0) break;
		taken[best] = 1;
		out.push(idx[best] ?? 0);
	}
	return out;
}

/** One greedy pass in the order of `keyOf`; returns sets as part indices. */
function greedyPass(
	parts: readonly MatchPart[],
	logs: Float64Array,
	width: number,
	setSize: number,
	tolerancePct: number,
	keyOf: Float64Array
): number[][] {
	const d = tolerancePct / 100;
	const maxLog = Math.log((1 + d) / (1 - d));
	const order = Int32Array.from(parts.keys()).sort((a, b) => (keyOf[a] ?? 0) - (keyOf[b] ?? 0));
	const used = new Uint8Array(parts.length);
	const sets: number[][] = [];
	const vec = (i: number) => parts[i]?.capacitanceF ?? [];
	const k = setSize;
	const candIdx = new Int32Array(MATCHING_WINDOW);
	const candDist = new Float64Array(MATCHING_WINDOW);
	const centre = new Float64Array(width);
	for (let pos = 0; pos < order.length; pos++) {
		const a = order[pos] ?? 0;
		if (used[a]) continue;
		let count = 0;
		let scanned = 0;
		for (let q = pos + 1; q < order.length && count < MATCHING_WINDOW && scanned < MATCHING_SCAN; q++) {
			const b = order[q] ?? 0;
			if (used[b]) continue;
			scanned++;
			// every key is ln C or a mean of ln C, so a candidate's key lies within maxLog of a's;
			// the order is sorted by key, so once out of reach every later part is too
			if ((keyOf[b] ?? 0) - (keyOf[a] ?? 0) > maxLog) break;
			const dist = maxLogDistance(logs, width, a, b);
			if (dist <= maxLog) {
				candIdx[count] = b;
				candDist[count] = dist;
				count++;
			}
		}
		if (count < k - 1) continue;
		let chosen: number[] | null = null;
		const first = [a, ...pickNearest(candIdx, candDist, count, k - 1)];
		if (isMatchedSet(first.map(vec), tolerancePct)) chosen = first;
		else {
			for (let j = 0; j < width; j++) {
				let sum = 0;
				for (const i of first) sum += vec(i)[j] ?? 0;
				centre[j] = Math.log(sum / k);
			}
			for (let c = 0; c < count; c++) candDist[c] = maxLogDistanceTo(logs, width, centre, candIdx[c] ?? 0);
			const second = [a, ...pickNearest(candIdx, candDist, count, k - 1)];
			if (isMatchedSet(second.map(vec), tolerancePct)) chosen = second;
		}
		if (chosen === null) continue;
		for (const i of chosen) used[i] = 1;
		sets.push(chosen);
	}
	return sets;
}
