/**
 * Constants of the average-and-range method.
 *
 * D4 (3 decimals), n = 2..25: ASTM MNL7 / Montgomery, Introduction to Statistical Quality Control,
 * Appendix VI, "Factors for Constructing Variables Control Charts", as copied in
 * shared/reference/spc/control-chart-constants.json (`table`; Table A.22 for n = 2..21,
 * Joglekar, Statistical Methods for Six Sigma, Wiley 2003, App. G (ASTM) for n = 22..25).
 *
 * d2, d3 (6 decimals), n = 2..25: the same file's `computed_check.values` (computed from the
 * definitions of the mean and standard deviation of the range of n standard normals); the file
 * states that every tabulated 3-decimal d2/d3 equals these rounded. Six decimals are kept because
 * the 3-decimal table values give K3 = 0.3145 instead of the AIAG 0.3146 for 10 parts.
 *
 * K1, K2, K3 (AIAG MSA Reference Manual, 4th ed., 2010, report-form constants, 1-sigma form):
 * K1 = 1/d2(trials), K2 = 1/d2*(appraisers, g = 1), K3 = 1/d2*(parts, g = 1), with
 * d2*(m, g = 1) = sqrt(d2^2 + d3^2) (the root mean square of the range), each rounded to
 * 4 decimals as the manual prints them; beyond the manual's tables (K1 and K2 for 2-3 levels,
 * K3 for 2-10 parts) the same formula extends them to 25 levels.
 */

/** Largest subgroup size covered by the tables. */
export const MAX_TABLE_N = 25;

const D4_TABLE: readonly number[] = [
	3.267, 2.574, 2.282, 2.114, 2.004, 1.924, 1.864, 1.816, 1.777, 1.744, 1.717, 1.693, 1.672, 1.653,
	1.637, 1.622, 1.608, 1.597, 1.585, 1.575, 1.566, 1.557, 1.548, 1.541
];

const D2_TABLE: readonly number[] = [
	1.128379, 1.692569, 2.058751, 2.325929, 2.534413, 2.704357, 2.847201, 2.970026, 3.077505,
	3.172873, 3.258455, 3.33598, 3.406763, 3.471827, 3.531983, 3.587884, 3.640064, 3.688963,
	3.73495, 3.778336, 3.819385, 3.858323, 3.895348, 3.930629
];

const D3_TABLE: readonly number[] = [
	0.852502, 0.888368, 0.879808, 0.864082, 0.84804, 0.833205, 0.819831, 0.807834, 0.797051,
	0.787315, 0.778478, 0.770416, 0.763023, 0.756211, 0.749908, 0.744052, 0.738591, 0.733481,
	0.728686, 0.724173, 0.719915, 0.715887, 0.712068, 0.708441
];

function lookup(table: readonly number[], n: number): number | null {
	if (!Number.isInteger(n) || n < 2 || n > MAX_TABLE_N) return null;
	return table[n - 2] ?? null;
}

/** D4 for subgroup size n (ASTM table). Assumes nothing; null outside n = 2..25. */
export function d4Factor(n: number): number | null {
	return lookup(D4_TABLE, n);
}

/** d2 for subgroup size n. Assumes nothing; null outside n = 2..25. */
export function d2Factor(n: number): number | null {
	return lookup(D2_TABLE, n);
}

/** d3 for subgroup size n. Assumes nothing; null outside n = 2..25. */
export function d3Factor(n: number): number | null {
	return lookup(D3_TABLE, n);
}

function round4(x: number): number {
	return Math.round(x * 1e4) / 1e4;
}

/** AIAG K1 for the number of trials: 1/d2, 4 decimals. Assumes nothing; null outside 2..25 trials. */
export function k1Factor(trials: number): number | null {
	const d2 = d2Factor(trials);
	return d2 === null ? null : round4(1 / d2);
}

/** 1/d2*(m, g = 1) to 4 decimals: AIAG K2 (m appraisers), K3 (m parts). Assumes nothing; null outside 2..25. */
export function kFromD2Star(m: number): number | null {
	const d2 = d2Factor(m);
	const d3 = d3Factor(m);
	if (d2 === null || d3 === null) return null;
	return round4(1 / Math.sqrt(d2 * d2 + d3 * d3));
}
