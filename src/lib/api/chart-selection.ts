// Which chart the pickers point at: pure, shared by the page's load (first render) and the
// browser (later changes), so both resolve a partial selection the same way.
import type { ChartSummary } from '$lib/server/charts';

export type ChartPick = { product?: string; station?: string; kind?: ChartSummary['kind']; chart?: number; characteristic?: string };
export type ResolvedPick = { product: string; station: string; kind: ChartSummary['kind']; chart: ChartSummary } | null;

const same = (a: string, b: string | undefined) => b !== undefined && a.toLowerCase() === b.toLowerCase();
const unique = (xs: string[]) => [...new Set(xs)];

/**
 * Resolves a partial pick against the charts there are: an existing chart id wins; otherwise
 * product, station and kind narrow the list (a value that matches nothing is dropped), the
 * characteristic is kept when the new set has it, and production charts come before reference ones.
 */
export function resolvePick(charts: readonly ChartSummary[], pick: ChartPick): ResolvedPick {
	const byId = pick.chart === undefined ? undefined : charts.find((c) => c.id === pick.chart);
	if (byId) return { product: byId.productCode, station: byId.station, kind: byId.kind, chart: byId };
	let set = charts.filter((c) => same(c.productCode, pick.product));
	if (set.length === 0) set = [...charts];
	const atStation = set.filter((c) => same(c.station, pick.station));
	if (atStation.length) set = atStation;
	const ofKind = set.filter((c) => c.kind === (pick.kind ?? 'production'));
	if (ofKind.length) set = ofKind;
	const first = set[0];
	if (!first) return null;
	const narrowed = set.filter((c) => c.productCode === first.productCode && c.station === first.station && c.kind === first.kind);
	const chart = narrowed.find((c) => c.characteristic === pick.characteristic) ?? narrowed[0] ?? first;
	return { product: chart.productCode, station: chart.station, kind: chart.kind, chart };
}

/** Choices for each picker given the current pick. */
export function pickOptions(charts: readonly ChartSummary[], at: NonNullable<ResolvedPick>) {
	const ofProduct = charts.filter((c) => c.productCode === at.product);
	const ofStation = ofProduct.filter((c) => c.station === at.station);
	return {
		products: unique(charts.map((c) => c.productCode)),
		stations: unique(ofProduct.map((c) => c.station)),
		kinds: unique(ofStation.map((c) => c.kind)) as ChartSummary['kind'][],
		characteristics: ofStation.filter((c) => c.kind === at.kind)
	};
}

/** The page URL's query for a pick (what a reload or a shared link restores). */
export function pickQuery(at: NonNullable<ResolvedPick>, view: string): string {
	const q = new URLSearchParams({ product: at.product, station: at.station, kind: at.kind, chart: String(at.chart.id), view });
	return `?${q}`;
}
