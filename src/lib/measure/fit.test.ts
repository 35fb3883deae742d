// Reference for the model: SPICE level-1 junction (depletion) capacitance at reverse bias V,
// C = CJO/(1+V/VJ)^M (ngspice manual, diode model; checked against ngspice itself in
// ngspice.test.ts). The synthetic data below are generated from that formula, written out here.
import { describe, expect, it } from 'vitest';
import { capacitanceAtBiasF, capacitanceRatio, fitJunction, sensitivityFPerV } from './fit';
import { prng, gauss } from '../../../tests/support/prng';

const spice = (cj0: number, vj: number, m: number, cp: number, v: number) => cj0 / Math.pow(1 + v / vj, m) + cp;


const BIAS = [0.5, 1, 2, 3, 4, 6, 10, 20];
const PARTS = [
	['abrupt', 50e-12, 0.75, 0.5, 0],
	['abrupt with Cp', 20e-12, 0.6, 0.45, 0.3e-12],
	['hyperabrupt', 300e-12, 1.5, 1.75, 0.5e-12],
	['hyperabrupt steep', 500e-12, 2.5, 2.0, 1e-12]
] as const;

describe('fitJunction on exact SPICE-formula data', () => {
	it.each(PARTS)('%s: recovers the parameters', (_n, cj0, vj, m, cp) => {
		const fit = fitJunction(
			BIAS,
			BIAS.map((v) => spice(cj0, vj, m, cp, v))
		);
		expect(fit.ok).toBe(true);
		if (!fit.ok) return;
		expect(Math.abs(fit.params.cj0F / cj0 - 1)).toBeLessThan(1e-6);
		expect(Math.abs(fit.params.vjV / vj - 1)).toBeLessThan(1e-5);
		expect(Math.abs(fit.params.m / m - 1)).toBeLessThan(1e-5);
		expect(Math.abs(fit.params.cpF - cp)).toBeLessThan(1e-17);
		expect(fit.rmsPct).toBeLessThan(1e-6);
		expect(fit.poorFit).toBe(false);
		expect(fit.cpFixed).toBe(false);
	});

	it('three points: Cp fixed at 0, three parameters fitted exactly', () => {
		const v3 = [1, 4, 10];
		const fit = fitJunction(
			v3,
			v3.map((v) => spice(100e-12, 0.8, 0.5, 0, v))
		);
		expect(fit.ok).toBe(true);
		if (!fit.ok) return;
		expect(fit.cpFixed).toBe(true);
		expect(fit.params.cpF).toBe(0);
		expect(Math.abs(fit.params.m / 0.5 - 1)).toBeLessThan(1e-6);
	});

	it('noise of 0.05 % (seeded) gives an RMS near 0.05 % and parameters near the truth', () => {
		const rand = prng(42);
		const caps = BIAS.map((v) => spice(300e-12, 1.5, 1.75, 0.5e-12, v) * (1 + 5e-4 * gauss(rand)));
		const fit = fitJunction(BIAS, caps);
		expect(fit.ok).toBe(true);
		if (!fit.ok) return;
		expect(fit.rmsPct).toBeGreaterThan(0.005);
		expect(fit.rmsPct).toBeLessThan(0.1);
		expect(Math.abs(fit.params.m / 1.75 - 1)).toBeLessThan(0.05);
	});

	it('a flat C(V) (no voltage dependence) ends finite: tiny M, huge Vj, no NaN', () => {
		const fit = fitJunction(
			BIAS,
			BIAS.map(() => 50e-12)
		);
		expect(fit.ok).toBe(true);
		if (!fit.ok) return;
		expect([fit.params.cj0F, fit.params.vjV, fit.params.m, fit.params.cpF, fit.rmsPct].every(Number.isFinite)).toBe(true);
		expect(fit.params.m).toBeLessThan(1e-3);
		expect(fit.rmsPct).toBeLessThan(1e-3);
	});

	it('C rising with reverse bias (not a junction) is flagged poor', () => {
		const fit = fitJunction(
			BIAS,
			BIAS.map((v) => 10e-12 + v * 1e-12)
		);
		expect(fit.ok && fit.poorFit).toBe(true);
	});

	it('data of another shape is flagged poor (a step in C)', () => {
		const caps = BIAS.map((v) => (v < 3 ? 100e-12 : 50e-12));
		const fit = fitJunction(BIAS, caps);
		expect(fit.ok).toBe(true);
		if (fit.ok) expect(fit.poorFit).toBe(true);
	});

	it('the poor-fit limit is inclusive-pass: rms exactly at the limit is not poor', () => {
		const caps = BIAS.map((v) => (v < 3 ? 100e-12 : 50e-12));
		const first = fitJunction(BIAS, caps);
		expect(first.ok).toBe(true);
		if (!first.ok) return;
		const again = fitJunction(BIAS, caps, { maxRmsPct: first.rmsPct });
		expect(again.ok && again.poorFit).toBe(false);
	});

	it.each([
		['empty', [], [], 'empty'],
		['mismatched lengths', [1, 2, 3], [1e-12, 2e-12], 'length-mismatch'],
		['one point', [1], [1e-12], 'too-few-points'],
		['two points', [1, 2], [2e-12, 1e-12], 'too-few-points'],
		['NaN capacitance', [1, 2, 3], [3e-12, Number.NaN, 1e-12], 'non-finite'],
		['+Inf capacitance', [1, 2, 3], [3e-12, Number.POSITIVE_INFINITY, 1e-12], 'non-finite'],
		['-Inf bias', [Number.NEGATIVE_INFINITY, 2, 3], [3e-12, 2e-12, 1e-12], 'non-finite'],
		['negative capacitance', [1, 2, 3], [3e-12, -2e-12, 1e-12], 'non-positive'],
		['zero capacitance', [1, 2, 3], [3e-12, 0, 1e-12], 'non-positive'],
		['forward bias', [-0.1, 2, 3], [3e-12, 2e-12, 1e-12], 'invalid-input'],
		['duplicate bias', [1, 1, 3, 4], [3e-12, 3e-12, 2e-12, 1e-12], 'duplicate-bias']
	])('refuses %s', (_n, v, c, code) => {
		const r = fitJunction(v, c);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
});

describe('derived quantities', () => {
	const p = { cj0F: 300e-12, vjV: 1.5, m: 1.75, cpF: 0.5e-12 };
	it('C(0) = Cj0 + Cp and C at V = Vj(2^(1/M)-1) is Cj0/2 + Cp (from the formula by hand)', () => {
		const c0 = capacitanceAtBiasF(p, 0);
		expect(c0.ok && c0.capacitanceF).toBeCloseTo(300.5e-12, 22);
		const vHalf = p.vjV * (Math.pow(2, 1 / p.m) - 1);
		const ch = capacitanceAtBiasF(p, vHalf);
		expect(ch.ok).toBe(true);
		if (ch.ok) expect(Math.abs(ch.capacitanceF / 150.5e-12 - 1)).toBeLessThan(1e-12);
	});
	it('ratio C(1)/C(10) equals the quotient of the SPICE formula values', () => {
		const r = capacitanceRatio(p, 1, 10);
		const want = spice(300e-12, 1.5, 1.75, 0.5e-12, 1) / spice(300e-12, 1.5, 1.75, 0.5e-12, 10);
		expect(r.ok).toBe(true);
		if (r.ok) expect(Math.abs(r.ratio / want - 1)).toBeLessThan(1e-14);
	});
	it.each([0, 0.5, 2, 10, 25])('dC/dV at %s V matches a central finite difference of the formula', (v) => {
		const h = 1e-5;
		const fd = (spice(300e-12, 1.5, 1.75, 0.5e-12, v + h) - spice(300e-12, 1.5, 1.75, 0.5e-12, v - h)) / (2 * h);
		const s = sensitivityFPerV(p, v);
		expect(s.ok).toBe(true);
		if (s.ok) expect(Math.abs(s.dCdVFPerV / fd - 1)).toBeLessThan(1e-7);
	});
	it.each([
		[Number.NaN, 'non-finite'],
		[Number.POSITIVE_INFINITY, 'non-finite'],
		[-1.5, 'invalid-input'],
		[-2, 'invalid-input']
	])('refuses bias %s', (v, code) => {
		const r = capacitanceAtBiasF(p, v);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
		expect(sensitivityFPerV(p, v).ok).toBe(false);
	});
	it('refuses invalid parameters', () => {
		expect(capacitanceAtBiasF({ ...p, vjV: 0 }, 1).ok).toBe(false);
		expect(capacitanceAtBiasF({ ...p, cpF: -1e-12 }, 1).ok).toBe(false);
		expect(capacitanceRatio({ ...p, m: Number.NaN }, 1, 2).ok).toBe(false);
	});
});
