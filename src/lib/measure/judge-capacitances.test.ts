// judgeCapacitances: bench capacitances (no tank) judged like station parts.
// Reference: the SPICE depletion-capacitance formula CJO/(1+V/VJ)^M (+ the package capacitance)
// with the diode models of tests/fixtures/ngspice/cases.json, written out here, so the expected
// capacitances, ratios and limits are computed independently of the fit and the judge.
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { judgeCapacitances } from './evaluate';
import type { SpecPlan } from './types';

type NgCase = { id: string; diodeModel: { CJO: number; VJ: number; M: number }; packageCpF: number; points: { biasV: number }[] };
const doc = JSON.parse(readFileSync(resolve(__dirname, '../../../tests/fixtures/ngspice/cases.json'), 'utf8')) as { cases: NgCase[] };

describe.each(doc.cases.slice(0, 3))('judgeCapacitances on $id', (c) => {
	const cj = (v: number) => c.diodeModel.CJO / Math.pow(1 + v / c.diodeModel.VJ, c.diodeModel.M) + c.packageCpF;
	const biases = c.points.map((p) => p.biasV);
	const lo = biases[0] ?? 0;
	const hi = biases[biases.length - 1] ?? 1;
	const plan: SpecPlan = {
		points: biases.map((v) => ({ biasV: v, minF: cj(v) * 0.98, maxF: cj(v) * 1.02 })),
		ratio: { lowBiasV: lo, highBiasV: hi, min: (cj(lo) / cj(hi)) * 0.99, max: (cj(lo) / cj(hi)) * 1.01 },
		leakage: { biasV: hi, maxA: 20e-9 },
		fit: { maxRmsPct: 0.5 }
	};
	const exact = biases.map((v) => ({ biasV: v, capacitanceF: cj(v), q: null }));

	it('passes exact model capacitances and the fit reproduces them', () => {
		const r = judgeCapacitances({ plan, points: exact, leakageA: 1e-9 });
		expect(r.judgement.failures).toEqual([]);
		expect(r.judgement).toMatchObject({ pass: true, bin: 1 });
		expect(r.fit).not.toBeNull();
		const f = r.fit ?? { cj0F: 0, vjV: 0, m: 0, cpF: 0, rmsPct: 1 };
		// The fitted curve goes through the model's capacitances (the four parameters are
		// correlated, so the curve, not each parameter, is the honest check).
		for (const v of biases) expect(f.cj0F / Math.pow(1 + v / f.vjV, f.m) + f.cpF).toBeCloseTo(cj(v), 15);
		expect(f.rmsPct).toBeLessThan(0.01);
	});

	it('puts a capacitance 5 % above its window in the capacitance bin with value and limits', () => {
		const v = biases[1] ?? lo;
		const points = exact.map((p) => (p.biasV === v ? { ...p, capacitanceF: cj(v) * 1.05 } : p));
		const r = judgeCapacitances({ plan, points, leakageA: 1e-9 });
		expect(r.judgement.pass).toBe(false);
		expect(r.judgement.bin).toBe(2);
		const f = r.judgement.failures.find((x) => x.category === 'capacitance');
		expect(f?.value).toBeCloseTo(cj(v) * 1.05, 20);
		expect(f?.high).toBeCloseTo(cj(v) * 1.02, 20);
	});

	it('a value exactly on a limit passes; leakage above its maximum fails in the leakage bin', () => {
		const onLimit = exact.map((p, i) => (i === 0 ? { ...p, capacitanceF: cj(p.biasV) * 1.02 } : p));
		const planOnLimit: SpecPlan = { ...plan, ratio: undefined, fit: undefined, points: plan.points.map((p, i) => (i === 0 ? { ...p, maxF: onLimit[0]?.capacitanceF } : p)) };
		expect(judgeCapacitances({ plan: planOnLimit, points: onLimit, leakageA: 20e-9 }).judgement.pass).toBe(true);
		const leaky = judgeCapacitances({ plan, points: exact, leakageA: 21e-9 });
		expect(leaky.judgement).toMatchObject({ pass: false, bin: 5 });
	});
});

describe('judgeCapacitances edge cases', () => {
	const plan: SpecPlan = { points: [{ biasV: 1, minF: 10e-12, maxF: 20e-12 }, { biasV: 4, minF: 5e-12, maxF: 12e-12 }] };
	it('fits nothing with fewer than 3 points and still judges the measured ones', () => {
		const r = judgeCapacitances({ plan, points: [{ biasV: 1, capacitanceF: 15e-12, q: null }, { biasV: 4, capacitanceF: 8e-12, q: null }], leakageA: null });
		expect(r.fit).toBeNull();
		expect(r.judgement.pass).toBe(true);
	});
	it('a plan point that was not measured and cannot be fitted is a measurement failure', () => {
		const r = judgeCapacitances({ plan, points: [{ biasV: 1, capacitanceF: 15e-12, q: null }], leakageA: null });
		expect(r.judgement).toMatchObject({ pass: false, bin: 7 });
		expect(r.judgement.failures[0]).toMatchObject({ test: 'C@4V', category: 'measurement' });
	});
});
