// Pareto ordering: categories by count, largest first, with the cumulative percentage (the
// Pareto chart of quality practice, common practice); ties by bin number so the order is stable.
// Expected shares are worked by hand from the counts.
import { describe, expect, test } from 'vitest';
import { paretoBars } from './pareto';

describe('paretoBars', () => {
	test('sorted by count, cumulative share adds up to 100 %', () => {
		const bars = paretoBars([
			{ bin: 1, label: 'good', count: 900 },
			{ bin: 2, label: 'capacitance', count: 60 },
			{ bin: 3, label: 'ratio', count: 25 },
			{ bin: 7, label: 'measurement', count: 15 }
		]);
		expect(bars.map((b) => b.bin)).toEqual([1, 2, 3, 7]);
		expect(bars.map((b) => b.cumulativePct)).toEqual([90, 96, 98.5, 100]);
		expect(bars.map((b) => b.pct)).toEqual([90, 6, 2.5, 1.5]);
	});
	test('a failure bin larger than the good one comes first; ties go by bin number; zero counts are left out', () => {
		const bars = paretoBars([
			{ bin: 1, label: 'good', count: 10 },
			{ bin: 5, label: 'leakage', count: 30 },
			{ bin: 4, label: 'q', count: 10 },
			{ bin: 6, label: 'fit', count: 0 }
		]);
		expect(bars.map((b) => b.bin)).toEqual([5, 1, 4]);
		expect(bars[2]?.cumulativePct).toBe(100);
	});
	test('no parts: no bars', () => {
		expect(paretoBars([])).toEqual([]);
		expect(paretoBars([{ bin: 1, label: 'good', count: 0 }])).toEqual([]);
	});
});
