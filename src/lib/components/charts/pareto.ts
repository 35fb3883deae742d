// Bin Pareto: failure categories by count, largest first, with the cumulative share.

export type ParetoBar = { bin: number; label: string; count: number; pct: number; cumulativePct: number };

/**
 * Bars sorted by count (descending; ties by bin number ascending, so the order is stable) with the
 * cumulative percentage of the total after each bar. Bins with a zero count are left out. Assumes
 * non-negative integer counts.
 */
export function paretoBars(bins: { bin: number; label: string; count: number }[]): ParetoBar[] {
	const kept = bins.filter((b) => b.count > 0).sort((a, b) => b.count - a.count || a.bin - b.bin);
	const total = kept.reduce((s, b) => s + b.count, 0);
	let running = 0;
	return kept.map((b) => {
		running += b.count;
		return { ...b, pct: (100 * b.count) / total, cumulativePct: running === total ? 100 : (100 * running) / total };
	});
}
