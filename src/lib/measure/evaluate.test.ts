// Reference: ngspice AC-analysis resonances (tests/fixtures/ngspice/cases.json, see
// ngspice.test.ts for the simulator and version) of tanks holding SPICE diode models; expected
// capacitances from the SPICE depletion formula CJO/(1+V/VJ)^M written out here.
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { evaluateUnit, type EvaluateInput } from './evaluate';
import type { Arrangement, SpecPlan } from './types';

type NgCase = {
	id: string;
	arrangement: Arrangement;
	inductanceH: number;
	strayF: number;
	blockingF: number | null;
	diodeModel: { CJO: number; VJ: number; M: number; RS: number };
	packageCpF: number;
	points: { biasV: number; resonanceHz: number; bandwidthHz?: number }[];
};
const doc = JSON.parse(readFileSync(resolve(__dirname, '../../../tests/fixtures/ngspice/cases.json'), 'utf8')) as { cases: NgCase[] };
const byId = (id: string): NgCase => {
	const c = doc.cases.find((k) => k.id === id);
	if (!c) throw new Error(`missing case ${id}`);
	return c;
};
const cj = (c: NgCase, v: number) => c.diodeModel.CJO / Math.pow(1 + v / c.diodeModel.VJ, c.diodeModel.M) + c.packageCpF;

const hyper = byId('hyperabrupt-parallel2-cb1n-stray12p');
const planFor = (c: NgCase, tolPct: number): SpecPlan => ({
	points: c.points.map((p) => ({ biasV: p.biasV, minF: cj(c, p.biasV) * (1 - tolPct / 100), maxF: cj(c, p.biasV) * (1 + tolPct / 100) })),
	ratio: { lowBiasV: 1, highBiasV: 10, min: (cj(c, 1) / cj(c, 10)) * 0.99, max: (cj(c, 1) / cj(c, 10)) * 1.01 },
	leakage: { biasV: 10, maxA: 20e-9 },
	fit: { maxRmsPct: 0.5 }
});
const inputFor = (c: NgCase, plan: SpecPlan): EvaluateInput => ({
	arrangement: c.arrangement,
	blockingF: c.blockingF,
	calibration: { inductanceH: c.inductanceH, strayF: c.strayF },
	plan,
	unit: { points: c.points.map((p) => ({ ...p })), leakageA: 2e-9, temperatureC: 25 }
});

describe('evaluateUnit', () => {
	it('a simulated hyperabrupt pair in parallel behind a blocking capacitor is good (bin 1)', () => {
		const r = evaluateUnit(inputFor(hyper, planFor(hyper, 1)));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.bin).toBe(1);
		expect(r.pass).toBe(true);
		expect(r.failures).toEqual([]);
		r.capacitanceF.forEach((c, i) => {
			const want = cj(hyper, hyper.points[i]?.biasV ?? Number.NaN);
			expect(Math.abs((c ?? Number.NaN) / want - 1)).toBeLessThan(1e-3);
		});
		expect(r.q).toBeNull();
		expect(r.esrOhm).toBeNull();
		expect(r.fit).not.toBeNull();
		expect(Math.abs((r.fit?.m ?? 0) / hyper.diodeModel.M - 1)).toBeLessThan(5e-3);
	});

	it('a tight capacitance window fails C and the plan says which points', () => {
		const plan = planFor(hyper, 1);
		plan.points = plan.points.map((p) => (p.biasV === 4 ? { biasV: 4, minF: (p.maxF ?? 0) * 1.001 } : p));
		const r = evaluateUnit(inputFor(hyper, plan));
		expect(r.ok && r.bin).toBe(2);
		if (r.ok) expect(r.failures.map((f) => f.test)).toEqual(['C@4V']);
	});

	it('an impossible reading still gets a bin: 7, with that point null and named', () => {
		const input = inputFor(hyper, planFor(hyper, 1));
		// above the stray-only resonance 1/(2 pi sqrt(L C_stray)) nothing is left for the part
		const strayOnlyHz = 1 / (2 * Math.PI * Math.sqrt(hyper.inductanceH * hyper.strayF));
		const pts = input.unit.points.map((p) => (p.biasV === 5 ? { ...p, resonanceHz: strayOnlyHz * 1.1 } : p));
		const r = evaluateUnit({ ...input, unit: { ...input.unit, points: pts } });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.bin).toBe(7);
		expect(r.pass).toBe(false);
		expect(r.capacitanceF[4]).toBeNull();
		expect(r.failures).toContainEqual({ test: 'C@5V', category: 'measurement', value: null, low: null, high: null });
		// the remaining seven points still fit
		expect(r.fit).not.toBeNull();
	});

	it('NaN resonance is an impossible reading (bin 7), not an error', () => {
		const input = inputFor(hyper, planFor(hyper, 1));
		const pts = input.unit.points.map((p, i) => (i === 0 ? { ...p, resonanceHz: Number.NaN } : p));
		const r = evaluateUnit({ ...input, unit: { ...input.unit, points: pts } });
		expect(r.ok && r.bin).toBe(7);
	});

	it('bandwidths give Q and per-part ESR (simulated RS) and Q is judged', () => {
		const loss = byId('loss-abrupt-parallel2-cb1n-stray12p');
		const plan: SpecPlan = { points: loss.points.map((p) => ({ biasV: p.biasV })), q: { biasV: 4, min: 1e5 } };
		const r = evaluateUnit(inputFor(loss, plan));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.esrOhm?.every((e) => e !== null && Math.abs(e / loss.diodeModel.RS - 1) < 0.01)).toBe(true);
		expect(r.fit).toBeNull();
		expect(r.bin).toBe(4);
		expect(r.failures[0]?.test).toBe('Q@4V');
	});

	it('one usable point: no fit; plan biases without a point become measurement failures', () => {
		const one = { ...hyper, points: hyper.points.slice(0, 1) };
		const r = evaluateUnit(inputFor(one, planFor(hyper, 1)));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.fit).toBeNull();
		expect(r.capacitanceF).toHaveLength(1);
		expect(r.bin).toBe(7);
		expect(r.failures.map((f) => f.test)).toContain('C@2V');
		expect(r.failures.map((f) => f.test)).not.toContain('C@1V');
	});

	const base = inputFor(hyper, planFor(hyper, 1));
	it.each([
		['unknown arrangement', { ...base, arrangement: 'triple' as Arrangement }, 'invalid-input'],
		['NaN inductance', { ...base, calibration: { inductanceH: Number.NaN, strayF: 0 } }, 'invalid-input'],
		['negative stray', { ...base, calibration: { inductanceH: 1e-3, strayF: -1e-12 } }, 'invalid-input'],
		['infinite blocking capacitor', { ...base, blockingF: Number.POSITIVE_INFINITY }, 'invalid-input'],
		['invalid plan', { ...base, plan: { points: [] } }, 'invalid-plan'],
		['no points', { ...base, unit: { points: [] } }, 'empty'],
		['NaN bias', { ...base, unit: { points: [{ biasV: Number.NaN, resonanceHz: 5e5 }] } }, 'invalid-input'],
		['duplicate bias', { ...base, unit: { points: [{ biasV: 1, resonanceHz: 5e5 }, { biasV: 1, resonanceHz: 6e5 }] } }, 'duplicate-bias'],
		['negative leakage', { ...base, unit: { ...base.unit, leakageA: -1e-9 } }, 'invalid-input'],
		['-Inf temperature', { ...base, unit: { ...base.unit, temperatureC: Number.NEGATIVE_INFINITY } }, 'invalid-input']
	])('refuses %s with a typed error', (_n, input, code) => {
		const r = evaluateUnit(input);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
});
