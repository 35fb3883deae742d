// Histogram classes against outside definitions: equal-width classes counting the values in each
// (NIST/SEMATECH e-Handbook of Statistical Methods §1.3.3.14, Histogram) and Scott's normal
// class width h = 3.5 s / n^(1/3) as documented for Dataplot's HISTOGRAM CLASS WIDTH command
// (NIST Dataplot Reference Manual, "HISTOGRAM CLASS WIDTH"). s comes from simple-statistics, an
// implementation independent of ours.
import { sampleStandardDeviation } from 'simple-statistics';
import { describe, expect, test } from 'vitest';
import { prng } from '../../../../tests/support/prng';
import { histogramClasses, MAX_CLASSES, scottWidth } from './histogram';

describe('Scott class width', () => {
	test('1…10: s² = n(n+1)/12 = 110/12 (closed form for consecutive integers), h = 3.5 s / 10^(1/3)', () => {
		const s = Math.sqrt(110 / 12);
		expect(scottWidth([1, 2, 3, 4, 5, 6, 7, 8, 9, 10])).toBeCloseTo((3.5 * s) / Math.cbrt(10), 12);
	});
	test('no spread or fewer than two values: no width', () => {
		expect(scottWidth([4])).toBeNull();
		expect(scottWidth([2, 2, 2])).toBeNull();
	});
});

describe('equal-width classes', () => {
	test('1…10: h ≈ 4.92, so ceil(9 / h) = 2 classes [1, 5.5) and [5.5, 10] of 5 values each (worked by hand)', () => {
		const c = histogramClasses([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
		expect(c.map((x) => x.count)).toEqual([5, 5]);
		expect(c[0]?.lo).toBe(1);
		expect(c[0]?.hi).toBeCloseTo(5.5, 12);
		expect(c[1]?.hi).toBe(10);
	});

	test('a normal sample: k = ceil(range / (3.5 s n^(-1/3))), equal widths, every value counted once, counts match a direct count', () => {
		const rand = prng(7);
		const values = Array.from({ length: 500 }, () => {
			// Box–Muller from the seeded uniform generator
			const u = Math.max(rand(), 1e-12);
			return 30 + 0.4 * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
		});
		const h = (3.5 * sampleStandardDeviation(values)) / Math.cbrt(values.length);
		const min = Math.min(...values);
		const max = Math.max(...values);
		const k = Math.ceil((max - min) / h);
		const c = histogramClasses(values);
		expect(c).toHaveLength(k);
		const width = (max - min) / k;
		for (const x of c) expect(x.hi - x.lo).toBeCloseTo(width, 9);
		expect(c.reduce((a, x) => a + x.count, 0)).toBe(values.length);
		// Direct count: half-open classes, the last one closed.
		c.forEach((x, i) => {
			const direct = values.filter((v) => v >= x.lo && (i === c.length - 1 ? v <= x.hi : v < x.hi)).length;
			expect(direct).toBe(x.count);
		});
	});

	test('a value exactly on a class boundary goes to the upper class; the maximum to the last', () => {
		const c = histogramClasses([0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 10]);
		const last = c[c.length - 1];
		expect(last?.hi).toBe(10);
		expect(c.reduce((a, x) => a + x.count, 0)).toBe(12);
		const boundary = c[1]?.lo ?? NaN;
		const holder = c.findIndex((x, i) => boundary >= x.lo && (i === c.length - 1 ? boundary <= x.hi : boundary < x.hi));
		expect(holder).toBe(1);
	});

	test('edge cases: empty, one value, all equal, NaN dropped, very wide data capped', () => {
		expect(histogramClasses([])).toEqual([]);
		expect(histogramClasses([3])).toEqual([{ lo: 3, hi: 3, count: 1 }]);
		expect(histogramClasses([2, 2, 2])).toEqual([{ lo: 2, hi: 2, count: 3 }]);
		expect(histogramClasses([1, Number.NaN, 2, Number.POSITIVE_INFINITY]).reduce((a, x) => a + x.count, 0)).toBe(2);
		const wide = [...Array.from({ length: 100_000 }, (_, i) => i % 100), 1e6];
		expect(histogramClasses(wide).length).toBeLessThanOrEqual(MAX_CLASSES);
	});
});
