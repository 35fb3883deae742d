import { describe, expect, test } from 'vitest';
import type { ChartSummary } from '$lib/server/charts';
import { pickOptions, pickQuery, resolvePick } from './chart-selection';

const chart = (id: number, productCode: string, station: string, kind: ChartSummary['kind'], characteristic: string): ChartSummary => ({
	id,
	productCode,
	station,
	kind,
	characteristic,
	unit: 'pF',
	status: 'active',
	pointCount: 40,
	limitsVersion: 1,
	openAlarms: 0
});

const CHARTS = [
	chart(1, 'KV-1', 'A-01', 'production', 'C@1V'),
	chart(2, 'KV-1', 'A-01', 'production', 'C@4V'),
	chart(3, 'KV-1', 'A-01', 'reference', 'C@1V'),
	chart(4, 'KV-1', 'A-02', 'production', 'C@1V'),
	chart(5, 'KV-2', 'B-01', 'production', 'C@2V')
];

describe('resolvePick', () => {
	test.each([
		['nothing chosen: the first production chart', {}, 1],
		['an existing chart id wins over everything else', { chart: 5, product: 'KV-1' }, 5],
		['an unknown chart id falls back to the filters', { chart: 99, product: 'KV-2' }, 5],
		['product and station, case-insensitive', { product: 'kv-1', station: 'a-02' }, 4],
		['the characteristic is kept when the new set has it', { product: 'KV-1', station: 'A-01', characteristic: 'C@4V' }, 2],
		['a characteristic the new set lacks gives its first chart', { product: 'KV-2', characteristic: 'C@4V' }, 5],
		['reference kind', { product: 'KV-1', station: 'A-01', kind: 'reference' as const }, 3],
		['a kind the station lacks is dropped', { product: 'KV-1', station: 'A-02', kind: 'reference' as const }, 4],
		['an unknown product is dropped', { product: 'nope' }, 1]
	])('%s', (_, pick, id) => {
		expect(resolvePick(CHARTS, pick)?.chart.id).toBe(id);
	});

	test('no charts at all: nothing to pick', () => {
		expect(resolvePick([], { product: 'KV-1' })).toBeNull();
	});
});

describe('pickOptions and pickQuery', () => {
	test('options narrow by product, then station, then kind', () => {
		const at = resolvePick(CHARTS, { chart: 1 });
		if (!at) throw new Error('expected a pick');
		const o = pickOptions(CHARTS, at);
		expect(o.products).toEqual(['KV-1', 'KV-2']);
		expect(o.stations).toEqual(['A-01', 'A-02']);
		expect(o.kinds).toEqual(['production', 'reference']);
		expect(o.characteristics.map((c) => c.id)).toEqual([1, 2]);
		expect(pickQuery(at, 'ewma')).toBe('?product=KV-1&station=A-01&kind=production&chart=1&view=ewma');
	});
});
