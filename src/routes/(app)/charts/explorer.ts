// The explorer's URL and side-by-side picks: pure, shared by the load and the browser.
import type { ResolvedPick } from '$lib/api/chart-selection';
import type { ChartSummary } from '$lib/server/charts';

export type Range = { from?: string; to?: string };
export type Side = { stations: string[]; shared: boolean };

/** Charts of the same product, kind and characteristic at other stations (the side-by-side candidates). */
export function siblings(charts: readonly ChartSummary[], at: NonNullable<ResolvedPick>): ChartSummary[] {
	return charts.filter((c) => c.productCode === at.product && c.kind === at.kind && c.characteristic === at.chart.characteristic);
}

/** The page URL for a pick, view, side-by-side stations and time range. */
export function explorerQuery(at: NonNullable<ResolvedPick>, view: string, side: Side, range: Range): string {
	const q = new URLSearchParams({ product: at.product, station: at.station, kind: at.kind, chart: String(at.chart.id), characteristic: at.chart.characteristic, view });
	if (side.stations.length) q.set('stations', side.stations.join(','));
	if (side.shared) q.set('shared', '1');
	if (range.from) q.set('from', range.from);
	if (range.to) q.set('to', range.to);
	return `?${q}`;
}

/** The chart endpoint's URL with a time range. */
export function chartUrl(id: number, view: string, limit: number, range: Range): string {
	const q = new URLSearchParams({ view, limit: String(limit) });
	if (range.from) q.set('from', range.from);
	if (range.to) q.set('to', range.to);
	return `/api/v1/charts/${id}?${q}`;
}
