import { describe, expect, test } from 'vitest';
import type { ChartDetail } from '$lib/server/charts';
import { chartModel, yExtent } from './model';

const limits = { shewhart: { centerLine: 26.5, upperControlLimit: 26.8, lowerControlLimit: 26.2, sigma: 0.1 } };
const detail = (data: ChartDetail['data'], withLimits = true): ChartDetail => ({
	chart: { id: 1, station: 'A-01', productCode: 'KV-1', kind: 'production', characteristic: 'C@1V', unit: 'pF', status: 'active', pointCount: 3, limitsVersion: 1, openAlarms: 1 },
	limits: withLimits ? limits : null,
	limitsHistory: [],
	spec: { lowerSpecLimit: 20, upperSpecLimit: 26.9 },
	points: [
		{ seq: 0, value: 26.5, at: '2026-01-01T00:00:00Z', serial: 'S1', unitId: 101, rules: [], limitsVersion: 1 },
		{ seq: 1, value: 26.4, at: '2026-01-01T00:01:00Z', serial: 'S2', unitId: 102, rules: [], limitsVersion: 1 },
		{ seq: 2, value: 27.0, at: '2026-01-01T00:02:00Z', serial: 'S3', unitId: 103, rules: ['WE1'], limitsVersion: 1 }
	],
	data,
	capability: null,
	capabilityNote: null
});

describe('chartModel', () => {
	test('I-MR: individuals with CL/UCL/LCL, zones and spec lines; MR without its first (undefined) point', () => {
		const m = chartModel(detail({ view: 'imr', movingRange: [{ seq: 0, value: null }, { seq: 1, value: 0.1 }, { seq: 2, value: 0.6 }], mrLimits: { centerLine: 0.11, upperControlLimit: 0.37, lowerControlLimit: 0 } }));
		const [i, mr] = m.panels;
		expect(i?.lines.map((l) => l.label)).toEqual(['CL', 'UCL', 'LCL', 'LSL', 'USL']);
		expect(i?.bands.map((b) => [b.from, b.to].map((v) => +v.toFixed(3)))).toEqual([[26.3, 26.7], [26.4, 26.6]]);
		expect(i?.series.find((p) => p.x === 2)?.rules).toEqual(['WE1']);
		expect(i?.series.map((p) => p.unitId)).toEqual([101, 102, 103]); // a click opens the part
		expect(mr?.series.map((p) => p.x)).toEqual([1, 2]);
		expect(mr?.lines.map((l) => l.label)).toEqual(['CL', 'UCL']); // LCL = 0 is not drawn
		expect(m.message).toBeNull();
	});

	test('before the baseline: points, no limits, and a message', () => {
		const m = chartModel(detail({ view: 'imr', movingRange: [], mrLimits: null }, false));
		expect(m.panels[0]?.lines.map((l) => l.label)).toEqual(['LSL', 'USL']);
		expect(m.message).toContain('No frozen limits yet');
	});

	test('CUSUM: C- is drawn below zero; signals are marked with their side', () => {
		const m = chartModel(detail({ view: 'cusum', decisionInterval: 0.5, series: [{ seq: 0, upper: 0.6, lower: 0.2, signalUpper: true, signalLower: false }] }));
		expect(m.panels[0]?.series[0]).toMatchObject({ y: 0.6, rules: ['CUSUM+'] });
		expect(m.panels[0]?.second?.[0]).toMatchObject({ y: -0.2, rules: [] });
	});

	test('a view the server could not build is a message, not a panel', () => {
		expect(chartModel(detail({ view: 'p', error: 'Fewer than 50 parts tested yet' }))).toEqual({ panels: [], message: 'Fewer than 50 parts tested yet' });
	});
});

describe('yExtent', () => {
	test('a spec limit near the data is in range; one far away is left off the scale', () => {
		const m = chartModel(detail({ view: 'imr', movingRange: [], mrLimits: null }));
		const panel = m.panels[0];
		if (!panel) throw new Error('expected a panel');
		const [lo, hi] = yExtent(panel);
		expect(hi).toBeGreaterThan(27.0); // the WE1 point and USL 26.9
		expect(lo).toBeGreaterThan(25); // LSL 20 would squash the series: off the scale
	});
});
