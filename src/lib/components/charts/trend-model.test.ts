import { describe, expect, test } from 'vitest';
import { calibrationPanels, referencePanels, trendDomain } from './trend-model';

describe('station trend panels', () => {
	test('one point per calibration in µH and pF, numbered from the oldest', () => {
		const [l, stray] = calibrationPanels([
			{ id: 1, at: '2026-01-01T06:00:00Z', inductanceH: 100.2e-6, strayF: 3.05e-12, residualPpm: 12 },
			{ id: 2, at: '2026-01-01T14:00:00Z', inductanceH: 100.5e-6, strayF: 3.1e-12, residualPpm: 9 }
		]);
		expect(l?.series.map((p) => [p.x, +p.y.toFixed(6)])).toEqual([[1, 100.2], [2, 100.5]]);
		expect(stray?.series.map((p) => +p.y.toFixed(6))).toEqual([3.05, 3.1]);
		expect(l?.unit).toBe('µH');
		expect(stray?.unit).toBe('pF');
	});
	test('reference charts carry their limits and the part of each point', () => {
		const [p] = referencePanels([
			{ chartId: 9, productCode: 'KV-1', characteristic: 'C@1V', unit: 'pF', limits: { centerLine: 30, upperControlLimit: 30.3, lowerControlLimit: 29.7, sigma: 0.1 }, points: [{ seq: 0, value: 30.1, at: '2026-01-01T00:00:00Z', serial: 'R1', unitId: 77, rules: [] }] }
		]);
		expect(p?.lines.map((x) => [x.label, x.value])).toEqual([['CL', 30], ['UCL', 30.3], ['LCL', 29.7]]);
		expect(p?.series[0]?.unitId).toBe(77);
		expect(referencePanels([{ chartId: 1, productCode: 'K', characteristic: 'C@1V', unit: 'pF', limits: null, points: [] }])[0]?.lines).toEqual([]);
	});
});

describe('trendDomain', () => {
	test('a flat series gets a range of the chosen relative width; a wide one keeps its spread', () => {
		const [l] = calibrationPanels([{ id: 1, at: '2026-01-01T06:00:00Z', inductanceH: 100e-6, strayF: 3e-12, residualPpm: 1 }]);
		const d = l ? trendDomain(l, 0.005) : undefined;
		expect(d?.map((v) => +v.toFixed(6))).toEqual([99.75, 100.25]);
		const [, s] = calibrationPanels([
			{ id: 1, at: '2026-01-01T06:00:00Z', inductanceH: 100e-6, strayF: 2e-12, residualPpm: 1 },
			{ id: 2, at: '2026-01-01T07:00:00Z', inductanceH: 100e-6, strayF: 4e-12, residualPpm: 1 }
		]);
		const w = s ? trendDomain(s, 0.005) : undefined;
		expect(w?.map((v) => +v.toFixed(6))).toEqual([1.84, 4.16]);
	});
});
