// Histogram classes for a characteristic: equal-width classes (NIST/SEMATECH e-Handbook §1.3.3.14:
// the range of the data split into equal-sized classes, the count of values in each) with the
// class width of Scott's normal-reference rule, h = 3.5 s n^(-1/3), one of the class-width choices
// documented for NIST Dataplot's HISTOGRAM CLASS WIDTH command. Classes are half-open [lo, hi),
// the last one closed, so every value falls in exactly one class.

export type HistogramClass = { lo: number; hi: number; count: number };

/** Most classes drawn (a 1 M-part lot would otherwise ask for ~500 narrow bars); our choice. */
export const MAX_CLASSES = 60;

/** Scott's class width 3.5 s / n^(1/3) (s: sample SD, n − 1 divisor); null below two values or for no spread. */
export function scottWidth(values: readonly number[]): number | null {
	const n = values.length;
	if (n < 2) return null;
	const mean = values.reduce((a, v) => a + v, 0) / n;
	const s = Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (n - 1));
	return s > 0 ? (3.5 * s) / Math.cbrt(n) : null;
}

/**
 * Equal-width classes over [min, max] of the finite values; the class count is ceil(range / h)
 * (at least 1, at most MAX_CLASSES, widening the classes when capped). All equal values give one
 * class of zero width. Empty input gives no classes.
 */
export function histogramClasses(input: readonly number[]): HistogramClass[] {
	const values = input.filter((v) => Number.isFinite(v));
	if (!values.length) return [];
	let min = Infinity;
	let max = -Infinity;
	for (const v of values) {
		if (v < min) min = v;
		if (v > max) max = v;
	}
	const h = scottWidth(values);
	if (h === null || !(max > min)) return [{ lo: min, hi: max, count: values.length }];
	const k = Math.min(MAX_CLASSES, Math.max(1, Math.ceil((max - min) / h)));
	const width = (max - min) / k;
	const counts = new Array<number>(k).fill(0);
	for (const v of values) {
		const i = Math.min(k - 1, Math.floor((v - min) / width));
		counts[i] = (counts[i] ?? 0) + 1;
	}
	return counts.map((count, i) => ({ lo: min + i * width, hi: i === k - 1 ? max : min + (i + 1) * width, count }));
}
