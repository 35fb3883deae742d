import { describe, expect, it } from 'vitest';
import {
	partCapacitanceFromResonance,
	partEsrOhm,
	qualityFactor,
	resonanceFromPartCapacitance,
	tankCapacitanceF
} from './convert';
import type { Arrangement } from './types';

const ARR: Arrangement[] = ['single', 'parallel2', 'antiseries2'];

describe('tankCapacitanceF', () => {
	// Reference: the ideal LC resonance identity f = 1/(2 pi sqrt(L C)) (any circuits textbook);
	// f is computed here from the identity, independently of the code under test.
	it.each([
		[1e-3, 100e-12],
		[1e-3, 207e-12],
		[470e-6, 10e-12],
		[10e-6, 1e-9],
		[1, 1e-6]
	])('inverts f = 1/(2 pi sqrt(LC)) for L=%s H, C=%s F', (l, c) => {
		const f = 1 / (2 * Math.PI * Math.sqrt(l * c));
		const r = tankCapacitanceF(f, l);
		expect(r.ok && r.tankF).toBeCloseTo(c, 20);
		if (r.ok) expect(Math.abs(r.tankF / c - 1)).toBeLessThan(1e-12);
	});

	// common practice (no source): a 1 mH tank near 350 kHz holds about 207 pF, near 735 kHz about 47 pF
	it.each([
		[350e3, 207e-12],
		[735e3, 47e-12]
	])('1 mH at %s Hz holds about %s F (common practice)', (f, c) => {
		const r = tankCapacitanceF(f, 1e-3);
		expect(r.ok).toBe(true);
		if (r.ok) expect(Math.abs(r.tankF / c - 1)).toBeLessThan(0.01);
	});

	it.each([
		[Number.NaN, 1e-3, 'non-finite'],
		[Number.POSITIVE_INFINITY, 1e-3, 'non-finite'],
		[Number.NEGATIVE_INFINITY, 1e-3, 'non-finite'],
		[1e5, Number.NaN, 'non-finite'],
		[0, 1e-3, 'non-positive'],
		[-1e5, 1e-3, 'non-positive'],
		[1e5, 0, 'non-positive'],
		[1e5, -1e-3, 'non-positive']
	])('refuses f=%s, L=%s with %s', (f, l, code) => {
		const r = tankCapacitanceF(f, l);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
});

describe('partCapacitanceFromResonance / resonanceFromPartCapacitance', () => {
	// The tank of a single part with no stray and no blocking capacitor is the plain LC identity.
	it('single, no stray, no blocking: C = 1/((2 pi f)^2 L) (LC identity)', () => {
		const c = 123e-12;
		const f = 1 / (2 * Math.PI * Math.sqrt(1e-3 * c));
		const r = partCapacitanceFromResonance({ arrangement: 'single', inductanceH: 1e-3, strayF: 0, blockingF: null, resonanceHz: f });
		expect(r.ok).toBe(true);
		if (r.ok) expect(Math.abs(r.capacitanceF / c - 1)).toBeLessThan(1e-12);
	});

	// Series/parallel capacitor rules (textbook): parallel adds, series adds reciprocals.
	it.each(
		ARR.flatMap((a) =>
			[null, 1e-9, 10e-9].flatMap((cb) => [0, 12e-12].map((stray) => [a, cb, stray] as const))
		)
	)('%s, Cb=%s, stray=%s: hand-built tank resonance converts back', (arrangement, cb, stray) => {
		const part = 80e-12;
		const branch = arrangement === 'single' ? part : arrangement === 'parallel2' ? part + part : 1 / (1 / part + 1 / part);
		const eff = cb === null ? branch : 1 / (1 / branch + 1 / cb);
		const f = 1 / (2 * Math.PI * Math.sqrt(1e-3 * (stray + eff)));
		const setup = { arrangement, inductanceH: 1e-3, strayF: stray, blockingF: cb };
		const back = partCapacitanceFromResonance({ ...setup, resonanceHz: f });
		expect(back.ok).toBe(true);
		if (back.ok) expect(Math.abs(back.capacitanceF / part - 1)).toBeLessThan(1e-12);
		const fwd = resonanceFromPartCapacitance({ ...setup, capacitanceF: part });
		expect(fwd.ok).toBe(true);
		if (fwd.ok) expect(Math.abs(fwd.resonanceHz / f - 1)).toBeLessThan(1e-13);
	});

	const base = { arrangement: 'single' as const, inductanceH: 1e-3, strayF: 10e-12, blockingF: 1e-9 };
	it.each([
		['resonance NaN', { ...base, resonanceHz: Number.NaN }, 'non-finite'],
		['resonance +Inf', { ...base, resonanceHz: Number.POSITIVE_INFINITY }, 'non-finite'],
		['resonance -Inf', { ...base, resonanceHz: Number.NEGATIVE_INFINITY }, 'non-finite'],
		['resonance 0', { ...base, resonanceHz: 0 }, 'non-positive'],
		['resonance negative', { ...base, resonanceHz: -5e5 }, 'non-positive'],
		// 1 mH with exactly the 10 pF stray resonates at 1/(2 pi sqrt(1e-3 * 10e-12)): nothing left for the part
		['tank exactly the stray', { ...base, resonanceHz: 1 / (2 * Math.PI * Math.sqrt(1e-3 * 10e-12)) }, 'non-positive-after-stray'],
		['tank below the stray', { ...base, resonanceHz: 3e6 }, 'non-positive-after-stray'],
		// tank = stray + Cb exactly: a series capacitor can never reach Cb
		['branch exactly Cb', { ...base, resonanceHz: 1 / (2 * Math.PI * Math.sqrt(1e-3 * 1.01e-9)) }, 'branch-not-below-blocking'],
		['branch above Cb', { ...base, resonanceHz: 1e5 }, 'branch-not-below-blocking'],
		['negative stray', { ...base, strayF: -1e-12, resonanceHz: 5e5 }, 'non-positive'],
		['zero blocking', { ...base, blockingF: 0, resonanceHz: 5e5 }, 'non-positive'],
		['NaN inductance', { ...base, inductanceH: Number.NaN, resonanceHz: 5e5 }, 'non-finite'],
		['bad arrangement', { ...base, arrangement: 'triple' as unknown as Arrangement, resonanceHz: 5e5 }, 'invalid-input']
	])('refuses %s', (_name, input, code) => {
		const r = partCapacitanceFromResonance(input);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});

	it.each([
		[Number.NaN, 'non-finite'],
		[0, 'non-positive'],
		[-1e-12, 'non-positive'],
		[Number.POSITIVE_INFINITY, 'non-finite']
	])('forward refuses capacitance %s', (c, code) => {
		const r = resonanceFromPartCapacitance({ ...base, capacitanceF: c });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
});

describe('qualityFactor and partEsrOhm', () => {
	it.each([
		[1e6, 1e3, 1000],
		[350e3, 3.5e3, 100]
	])('Q = f/BW (definition of Q from the half-power bandwidth): f=%s BW=%s', (f, bw, q) => {
		const r = qualityFactor(f, bw);
		expect(r.ok && r.q).toBeCloseTo(q, 9);
	});
	it.each([
		[Number.NaN, 1],
		[1e6, 0],
		[1e6, -1],
		[1e6, Number.POSITIVE_INFINITY]
	])('Q refuses f=%s BW=%s', (f, bw) => {
		expect(qualityFactor(f, bw).ok).toBe(false);
	});
	// Textbook: a capacitor's Q = 1/(w C ESR). With one part, no stray and no blocking capacitor the
	// tank Q is the part's Q, so ESR = 1/(w C Q).
	it('single part alone: ESR = 1/(w C Q) (capacitor Q definition)', () => {
		const c = 100e-12;
		const f = 1 / (2 * Math.PI * Math.sqrt(1e-3 * c));
		const q = 2500;
		const r = partEsrOhm({ arrangement: 'single', inductanceH: 1e-3, strayF: 0, blockingF: null, resonanceHz: f, q });
		expect(r.ok).toBe(true);
		if (r.ok) expect(Math.abs(r.esrOhm / (1 / (2 * Math.PI * f * c * q)) - 1)).toBeLessThan(1e-12);
	});
	it.each([Number.NaN, 0, -3])('ESR refuses q=%s', (q) => {
		expect(partEsrOhm({ arrangement: 'single', inductanceH: 1e-3, strayF: 0, blockingF: null, resonanceHz: 5e5, q }).ok).toBe(false);
	});
});
