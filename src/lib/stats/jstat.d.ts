// Minimal typing for the parts of jStat (https://jstat.github.io) that Biasline uses.
declare module 'jstat' {
	interface Dist1 {
		cdf(x: number, df: number): number;
		inv(p: number, df: number): number;
	}
	interface Dist2 {
		cdf(x: number, a: number, b: number): number;
		inv(p: number, a: number, b: number): number;
	}
	export const jStat: {
		centralF: Dist2;
		studentt: Dist1;
		chisquare: Dist1;
		normal: Dist2;
	};
	const _default: { jStat: typeof jStat };
	export default _default;
}
