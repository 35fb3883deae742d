// Reference: the ideal LC identity f = 1/(2 pi sqrt(L C)) (textbook) and the series-capacitor
// rule 1/C = 1/C1 + 1/C2; the reference readings are built from them here.
import { describe, expect, it } from 'vitest';
import { calibrateFixture, calibrationInForce, DEFAULT_CALIBRATION_LIMITS } from './calibration';
import { prng } from '../../../tests/support/prng';

const L = 1.02e-3;
const STRAY = 11.5e-12;
const REFS = [22e-12, 47e-12, 100e-12, 220e-12, 470e-12];
const f = (c: number, cb: number | null) => {
	const eff = cb === null ? c : 1 / (1 / c + 1 / cb);
	return 1 / (2 * Math.PI * Math.sqrt(L * (STRAY + eff)));
};
const AT = Date.UTC(2026, 0, 5, 6, 0, 0);


describe('calibrateFixture', () => {
	it.each([null, 1e-9, 10e-9])('exact line recovers L and the stray (Cb = %s)', (cb) => {
		const r = calibrateFixture({ references: REFS.map((c) => ({ capacitanceF: c, resonanceHz: f(c, cb) })), blockingF: cb, at: AT });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(Math.abs(r.calibration.inductanceH / L - 1)).toBeLessThan(1e-9);
		expect(Math.abs(r.calibration.strayF - STRAY)).toBeLessThan(1e-18);
		expect(r.calibration.residualPpm).toBeLessThan(1e-3);
		expect(r.calibration.referenceCount).toBe(5);
		// default validity 8 h
		expect(r.calibration.validUntil - AT).toBe(8 * 3_600_000);
	});

	it('two references: exact and zero residual by construction', () => {
		const r = calibrateFixture({ references: [47e-12, 220e-12].map((c) => ({ capacitanceF: c, resonanceHz: f(c, null) })), blockingF: null, at: AT });
		expect(r.ok && r.calibration.residualPpm).toBeLessThan(1e-6);
	});

	it.each([10, 50, 150])('frequency noise of %s ppm degrades gracefully', (ppm) => {
		const rand = prng(ppm);
		const refs = REFS.map((c) => ({ capacitanceF: c, resonanceHz: f(c, null) * (1 + ppm * 1e-6 * (2 * rand() - 1) * Math.sqrt(3)) }));
		const r = calibrateFixture({ references: refs, blockingF: null, at: AT, limits: { maxResidualPpm: 1000 } });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		// a frequency error e moves y = 1/w^2 by 2e, so L moves by a few times e over this span
		expect(Math.abs(r.calibration.inductanceH / L - 1)).toBeLessThan(10 * ppm * 1e-6);
		expect(Math.abs(r.calibration.strayF - STRAY)).toBeLessThan(ppm * 1e-14);
		expect(r.calibration.residualPpm).toBeLessThan(2 * ppm);
		expect(r.calibration.residualPpm).toBeGreaterThan(0.05 * ppm);
	});

	it('refuses a residual above the limit and reports the candidate', () => {
		const refs = REFS.map((c, i) => ({ capacitanceF: c, resonanceHz: f(c, null) * (1 + (i === 2 ? 2e-3 : 0)) }));
		const r = calibrateFixture({ references: refs, blockingF: null, at: AT });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.error.code).toBe('calibration-residual');
		expect(r.candidate?.residualPpm).toBeGreaterThan(DEFAULT_CALIBRATION_LIMITS.maxResidualPpm);
	});

	it('a residual exactly on the limit passes', () => {
		const refs = REFS.map((c, i) => ({ capacitanceF: c, resonanceHz: f(c, null) * (1 + (i === 2 ? 2e-3 : 0)) }));
		const first = calibrateFixture({ references: refs, blockingF: null, at: AT, limits: { maxResidualPpm: 1e6 } });
		expect(first.ok).toBe(true);
		if (!first.ok) return;
		const again = calibrateFixture({ references: refs, blockingF: null, at: AT, limits: { maxResidualPpm: first.calibration.residualPpm } });
		expect(again.ok).toBe(true);
	});

	const exact = REFS.map((c) => ({ capacitanceF: c, resonanceHz: f(c, null) }));
	it.each([
		['inductance moved 1.5 %', { inductanceH: L * 1.015, strayF: STRAY }, 'calibration-inductance-change'],
		['stray moved 3 pF', { inductanceH: L, strayF: STRAY - 3e-12 }, 'calibration-stray-change']
	])('refuses when %s since the previous calibration', (_n, previous, code) => {
		const r = calibrateFixture({ references: exact, blockingF: null, at: AT, previous });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
	it('accepts changes inside the limits (0.5 %, 1 pF)', () => {
		const r = calibrateFixture({ references: exact, blockingF: null, at: AT, previous: { inductanceH: L * 1.005, strayF: STRAY + 1e-12 } });
		expect(r.ok).toBe(true);
	});
	it('a limit passed as undefined takes the default', () => {
		const r = calibrateFixture({
			references: exact,
			blockingF: null,
			at: AT,
			validityHours: undefined,
			limits: { maxResidualPpm: undefined, maxInductanceChangePct: undefined, maxStrayChangeF: undefined },
			previous: { inductanceH: L * 1.015, strayF: STRAY }
		});
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('calibration-inductance-change');
	});
	it('per-station limits override the defaults', () => {
		const r = calibrateFixture({
			references: exact,
			blockingF: null,
			at: AT,
			previous: { inductanceH: L * 1.005, strayF: STRAY },
			limits: { maxInductanceChangePct: 0.1 }
		});
		expect(r.ok).toBe(false);
	});

	it('refuses a negative stray (reference readings above any physical tank)', () => {
		const refs = REFS.map((c) => ({ capacitanceF: c, resonanceHz: 1 / (2 * Math.PI * Math.sqrt(L * (c - 5e-12))) }));
		const r = calibrateFixture({ references: refs, blockingF: null, at: AT });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('calibration-negative-stray');
	});

	it.each([
		['empty', [], 'empty'],
		['one reference', [{ capacitanceF: 47e-12, resonanceHz: 7e5 }], 'too-few-points'],
		['NaN frequency', [{ capacitanceF: 47e-12, resonanceHz: Number.NaN }, { capacitanceF: 100e-12, resonanceHz: 5e5 }], 'non-finite'],
		['+Inf capacitance', [{ capacitanceF: Number.POSITIVE_INFINITY, resonanceHz: 7e5 }, { capacitanceF: 100e-12, resonanceHz: 5e5 }], 'non-finite'],
		['negative capacitance', [{ capacitanceF: -47e-12, resonanceHz: 7e5 }, { capacitanceF: 100e-12, resonanceHz: 5e5 }], 'non-positive'],
		['identical references', [{ capacitanceF: 47e-12, resonanceHz: 7e5 }, { capacitanceF: 47e-12, resonanceHz: 7.1e5 }], 'degenerate']
	])('refuses %s', (_n, references, code) => {
		const r = calibrateFixture({ references, blockingF: null, at: AT });
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
	it.each([
		['NaN time', { at: Number.NaN }],
		['zero validity', { validityHours: 0 }],
		['negative blocking', { blockingF: -1e-9 }]
	])('refuses %s', (_n, extra) => {
		expect(calibrateFixture({ references: exact, blockingF: null, at: AT, ...extra }).ok).toBe(false);
	});
});

describe('calibrationInForce', () => {
	const cal = { at: AT, validUntil: AT + 2 * 3_600_000 };
	it.each([
		[AT - 1, false],
		[AT, true],
		[AT + 3_600_000, true],
		[AT + 2 * 3_600_000 - 1, true],
		[AT + 2 * 3_600_000, false],
		[Number.NaN, false]
	])('at %s: %s', (now, want) => {
		expect(calibrationInForce(cal, now)).toBe(want);
	});
	it('validUntil follows the validity period given', () => {
		const r = calibrateFixture({ references: exact(), blockingF: null, at: AT, validityHours: 2 });
		expect(r.ok && r.calibration.validUntil).toBe(AT + 2 * 3_600_000);
	});
	function exact() {
		return REFS.map((c) => ({ capacitanceF: c, resonanceHz: f(c, null) }));
	}
});
