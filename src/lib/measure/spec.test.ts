// Spec judgement is a rule set of our own, not a computation with a published value: the bin
// numbers, the priority order (measurement, capacitance, ratio, q, leakage, fit) and inclusive
// limits are the project's documented choices in spec.ts. Model values use the SPICE
// depletion formula C = CJO/(1+V/VJ)^M + Cp, written out here.
import { describe, expect, it } from 'vitest';
import { judgeUnit, validateSpecPlan } from './spec';
import type { SpecPlan } from './types';

const PLAN: SpecPlan = {
	points: [
		{ biasV: 1, minF: 30e-12, maxF: 36e-12 },
		{ biasV: 4, minF: 18e-12, maxF: 22e-12 },
		{ biasV: 10 },
		{ biasV: 25, minF: 8e-12, maxF: 10e-12 }
	],
	ratio: { lowBiasV: 1, highBiasV: 25, min: 3, max: 4.5 },
	q: { biasV: 4, min: 200 },
	leakage: { biasV: 25, maxA: 10e-9 },
	fit: { maxRmsPct: 1 }
};
const params = { cj0F: 50e-12, vjV: 0.75, m: 0.5, cpF: 0 };
const model = (v: number) => params.cj0F / Math.sqrt(1 + v / params.vjV);
const goodPoints = [1, 4, 10, 25].map((v) => ({ biasV: v, capacitanceF: model(v), q: v === 4 ? 500 : null }));
const good = { plan: PLAN, points: goodPoints, fit: { params, rmsPct: 0.05 }, leakageA: 1e-9 };

describe('validateSpecPlan', () => {
	it('accepts a sound plan', () => {
		expect(validateSpecPlan(PLAN).ok).toBe(true);
	});
	it.each([
		['no points', { points: [] }, 'points'],
		['minF above maxF', { points: [{ biasV: 1 }, { biasV: 2 }, { biasV: 3, minF: 5e-12, maxF: 4e-12 }] }, 'points.2.minF'],
		['minF equal to maxF', { points: [{ biasV: 1, minF: 5e-12, maxF: 5e-12 }] }, 'points.0.minF'],
		['duplicate bias', { points: [{ biasV: 1 }, { biasV: 4 }, { biasV: 1 }] }, 'points.2.biasV'],
		['NaN bias', { points: [{ biasV: Number.NaN }] }, 'points.0.biasV'],
		['forward bias', { points: [{ biasV: -1 }] }, 'points.0.biasV'],
		['infinite maxF', { points: [{ biasV: 1, maxF: Number.POSITIVE_INFINITY }] }, 'points.0.maxF'],
		['negative minF', { points: [{ biasV: 1, minF: -1e-12 }] }, 'points.0.minF'],
		['ratio bias not a point', { points: [{ biasV: 1 }, { biasV: 4 }], ratio: { lowBiasV: 1, highBiasV: 25, min: 2 } }, 'ratio.highBiasV'],
		['ratio biases reversed', { points: [{ biasV: 1 }, { biasV: 4 }], ratio: { lowBiasV: 4, highBiasV: 1, min: 2 } }, 'ratio.lowBiasV'],
		['ratio without limits', { points: [{ biasV: 1 }, { biasV: 4 }], ratio: { lowBiasV: 1, highBiasV: 4 } }, 'ratio'],
		['ratio min above max', { points: [{ biasV: 1 }, { biasV: 4 }], ratio: { lowBiasV: 1, highBiasV: 4, min: 5, max: 4 } }, 'ratio.min'],
		['q bias not a point', { points: [{ biasV: 1 }], q: { biasV: 2, min: 100 } }, 'q.biasV'],
		['q min zero', { points: [{ biasV: 1 }], q: { biasV: 1, min: 0 } }, 'q.min'],
		['leakage max NaN', { points: [{ biasV: 1 }], leakage: { biasV: 25, maxA: Number.NaN } }, 'leakage.maxA'],
		['fit limit negative', { points: [{ biasV: 1 }], fit: { maxRmsPct: -1 } }, 'fit.maxRmsPct'],
		['set size 1', { points: [{ biasV: 1 }], matching: { setSize: 1, tolerancePct: 1 } }, 'matching.setSize'],
		['set size 2.5', { points: [{ biasV: 1 }], matching: { setSize: 2.5, tolerancePct: 1 } }, 'matching.setSize'],
		['tolerance 0', { points: [{ biasV: 1 }], matching: { setSize: 2, tolerancePct: 0 } }, 'matching.tolerancePct'],
		['failure sorted into the good bin', { points: [{ biasV: 1 }], bins: { ratio: 1 } }, 'bins.ratio'],
		['baseline of one part', { points: [{ biasV: 1 }], spc: { baselineParts: 1 } }, 'spc.baselineParts']
	] as [string, SpecPlan, string][])('rejects %s at %s', (_n, plan, path) => {
		const r = validateSpecPlan(plan);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.errors.map((e) => e.path)).toContain(path);
	});
	it('reports every error, not only the first', () => {
		const r = validateSpecPlan({ points: [{ biasV: 1, minF: 2, maxF: 1 }, { biasV: 1 }], q: { biasV: 9, min: -1 } });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.errors.map((e) => e.path).sort()).toEqual(['points.0.minF', 'points.1.biasV', 'q.biasV', 'q.min']);
	});
	it('message names the rule', () => {
		const r = validateSpecPlan({ points: [{ biasV: 1 }, { biasV: 2 }, { biasV: 3, minF: 5e-12, maxF: 4e-12 }] });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(`${r.errors[0]?.path}: ${r.errors[0]?.message}`).toBe('points.2.minF: must be below maxF');
	});
});

describe('judgeUnit', () => {
	it('a good part is bin 1 with no failures', () => {
		expect(judgeUnit(good)).toEqual({ pass: true, bin: 1, failures: [] });
	});

	it('values exactly on the limits pass (inclusive limits)', () => {
		const plan: SpecPlan = {
			points: [{ biasV: 1, minF: model(1), maxF: 40e-12 }, { biasV: 25, minF: 1e-12, maxF: model(25) }],
			ratio: { lowBiasV: 1, highBiasV: 25, min: model(1) / model(25) },
			q: { biasV: 1, min: 300 },
			leakage: { biasV: 25, maxA: 2e-9 },
			fit: { maxRmsPct: 0.5 }
		};
		const r = judgeUnit({
			plan,
			points: [
				{ biasV: 1, capacitanceF: model(1), q: 300 },
				{ biasV: 25, capacitanceF: model(25), q: null }
			],
			fit: { params, rmsPct: 0.5 },
			leakageA: 2e-9
		});
		expect(r.failures).toEqual([]);
		expect(r.bin).toBe(1);
	});

	it('returns every failure with value and limits, bin from the priority order', () => {
		const points = goodPoints.map((p) => (p.biasV === 1 ? { ...p, capacitanceF: 40e-12 } : p.biasV === 4 ? { ...p, q: 150 } : p));
		const r = judgeUnit({ ...good, points, leakageA: 20e-9, fit: { params, rmsPct: 2 } });
		expect(r.pass).toBe(false);
		expect(r.failures.map((f) => f.test)).toEqual(['C@1V', 'ratio C1/C25', 'Q@4V', 'leakage@25V', 'fit rms']);
		expect(r.failures[0]).toEqual({ test: 'C@1V', category: 'capacitance', value: 40e-12, low: 30e-12, high: 36e-12 });
		expect(r.failures[2]).toEqual({ test: 'Q@4V', category: 'q', value: 150, low: 200, high: null });
		expect(r.bin).toBe(2);
	});

	it.each([
		['ratio', { ...good, plan: { ...PLAN, ratio: { lowBiasV: 1, highBiasV: 25, max: 3.5 } } }, 3],
		['q', { ...good, points: goodPoints.map((p) => (p.biasV === 4 ? { ...p, q: 100 } : p)) }, 4],
		['leakage', { ...good, leakageA: 11e-9 }, 5],
		['fit', { ...good, fit: { params, rmsPct: 1.5 } }, 6],
		['missing leakage reading is a measurement failure', { ...good, leakageA: null }, 7]
	])('%s failure alone gives its default bin', (_n, input, bin) => {
		expect(judgeUnit(input).bin).toBe(bin);
	});

	it('a measurement failure outranks everything', () => {
		const r = judgeUnit({
			...good,
			leakageA: 99e-9,
			priorFailures: [{ test: 'C@4V', category: 'measurement', value: null, low: null, high: null }],
			points: goodPoints.map((p) => (p.biasV === 4 ? { ...p, capacitanceF: null } : p))
		});
		expect(r.bin).toBe(7);
		expect(r.failures.filter((f) => f.test === 'C@4V')).toHaveLength(1);
		expect(r.failures.map((f) => f.test)).toContain('leakage@25V');
	});

	it('plan bins override the defaults', () => {
		const r = judgeUnit({ ...good, plan: { ...PLAN, bins: { leakage: 9 } }, leakageA: 1e-6 });
		expect(r.bin).toBe(9);
	});

	it('a plan bias with no measured point is judged from the fitted model', () => {
		const plan: SpecPlan = { points: [{ biasV: 2, minF: model(2) * 0.999, maxF: model(2) * 1.001 }] };
		const measured = [1, 4, 10].map((v) => ({ biasV: v, capacitanceF: model(v), q: null }));
		expect(judgeUnit({ plan, points: measured, fit: { params, rmsPct: 0 }, leakageA: null }).pass).toBe(true);
		const tight: SpecPlan = { points: [{ biasV: 2, minF: model(2) * 1.01 }] };
		const r = judgeUnit({ plan: tight, points: measured, fit: { params, rmsPct: 0 }, leakageA: null });
		expect(r.failures[0]?.category).toBe('capacitance');
		expect(r.failures[0]?.value).toBeCloseTo(model(2), 20);
	});

	it('no point and no model: measurement failure; missing fit under a fit limit: fit failure', () => {
		const plan: SpecPlan = { points: [{ biasV: 2, minF: 1e-12 }], fit: { maxRmsPct: 1 } };
		const r = judgeUnit({ plan, points: [], fit: null, leakageA: null });
		expect(r.failures).toEqual([
			{ test: 'C@2V', category: 'measurement', value: null, low: 1e-12, high: null },
			{ test: 'fit rms', category: 'fit', value: null, low: null, high: 1 }
		]);
		expect(r.bin).toBe(7);
	});

	it('names fractional biases plainly', () => {
		const plan: SpecPlan = { points: [{ biasV: 0.5, maxF: 1e-12 }] };
		const r = judgeUnit({ plan, points: [{ biasV: 0.5, capacitanceF: 2e-12, q: null }], fit: null, leakageA: null });
		expect(r.failures[0]?.test).toBe('C@0.5V');
	});
});
