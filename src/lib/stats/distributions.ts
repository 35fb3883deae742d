/**
 * Probability distributions used by the statistics modules, from jStat (a maintained,
 * widely used package) behind one typed surface, so no other module imports jStat directly.
 * Every function assumes finite arguments and returns NaN for arguments outside its domain.
 */
import jstatModule from 'jstat';

const { jStat } = jstatModule;

/** Upper tail P(F > f) of the central F distribution with (df1, df2) degrees of freedom. */
export function fUpperTail(f: number, df1: number, df2: number): number {
	if (!(df1 > 0 && df2 > 0) || !Number.isFinite(f)) return Number.NaN;
	if (f <= 0) return 1;
	return 1 - jStat.centralF.cdf(f, df1, df2);
}

/** Quantile of Student's t with df degrees of freedom, p in (0, 1). */
export function tQuantile(p: number, df: number): number {
	if (!(p > 0 && p < 1 && df > 0)) return Number.NaN;
	return jStat.studentt.inv(p, df);
}

/** Two-sided p-value of a t statistic with df degrees of freedom. */
export function tTwoSidedP(t: number, df: number): number {
	if (!(df > 0) || !Number.isFinite(t)) return Number.NaN;
	return 2 * (1 - jStat.studentt.cdf(Math.abs(t), df));
}

/** Quantile of the chi-square distribution with df degrees of freedom, p in (0, 1). */
export function chiSquareQuantile(p: number, df: number): number {
	if (!(p > 0 && p < 1 && df > 0)) return Number.NaN;
	return jStat.chisquare.inv(p, df);
}

/** Standard normal CDF. */
export function normalCdf(z: number): number {
	if (Number.isNaN(z)) return Number.NaN;
	return jStat.normal.cdf(z, 0, 1);
}

/** Standard normal quantile, p in (0, 1). */
export function normalQuantile(p: number): number {
	if (!(p > 0 && p < 1)) return Number.NaN;
	return jStat.normal.inv(p, 0, 1);
}

/**
 * Upper tail P(F > f) of the central F distribution, computed as the lower tail of 1/F ~ F(df2, df1)
 * so that tiny p-values (1e-15 and below) keep their relative precision; 1 - cdf loses them.
 */
export function fUpperTailAccurate(f: number, df1: number, df2: number): number {
	if (!(df1 > 0 && df2 > 0) || !Number.isFinite(f)) return Number.NaN;
	if (f <= 0) return 1;
	return jStat.centralF.cdf(1 / f, df2, df1);
}
