import { describe, expect, test } from 'vitest';
import type { ChartSummary } from '$lib/server/charts';
import { ChartsPageQuery } from '$lib/schemas/charts-ui';
import { chartUrl, explorerQuery, siblings } from './explorer';

const c = (id: number, station: string, characteristic = 'C@1V', kind: ChartSummary['kind'] = 'production'): ChartSummary => ({
	id, station, productCode: 'KV-1', kind, characteristic, unit: 'pF', status: 'active', pointCount: 5, limitsVersion: 1, openAlarms: 0
});

describe('chart explorer URL', () => {
	const charts = [c(1, 'A-01'), c(2, 'A-02'), c(3, 'A-02', 'C@4V'), c(4, 'B-01', 'C@1V', 'reference')];
	const pick = { product: 'KV-1', station: 'A-01', kind: 'production' as const, chart: charts[0] as ChartSummary };
	test('siblings: the same product, kind and characteristic at every station', () => {
		expect(siblings(charts, pick).map((x) => x.id)).toEqual([1, 2]);
	});
	test('the query round-trips through the page schema', () => {
		const q = explorerQuery(pick, 'ewma', { stations: ['A-01', 'A-02'], shared: true }, { from: '2026-03-01T00:00:00.000Z' });
		const parsed = ChartsPageQuery.parse(Object.fromEntries(new URLSearchParams(q.slice(1))));
		expect(parsed).toMatchObject({ product: 'KV-1', station: 'A-01', chart: 1, characteristic: 'C@1V', view: 'ewma', stations: ['A-01', 'A-02'], shared: '1', from: '2026-03-01T00:00:00.000Z' });
		expect(parsed.to).toBeUndefined();
	});
	test('odd range values fall back to no range; a date means midnight UTC', () => {
		expect(ChartsPageQuery.parse({ from: '2026-02-30x', to: '2026-03-02' })).toMatchObject({ from: undefined, to: '2026-03-02T00:00:00.000Z' });
		expect(ChartsPageQuery.parse({ from: '2026-13-45' }).from).toBeUndefined();
	});
	test('chart URL carries the range', () => {
		expect(chartUrl(7, 'imr', 500, { to: '2026-03-02T00:00:00.000Z' })).toBe('/api/v1/charts/7?view=imr&limit=500&to=2026-03-02T00%3A00%3A00.000Z');
	});
});
