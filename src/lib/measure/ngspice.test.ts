// Reference: ngspice (Debian package, /usr/bin/ngspice, version in cases.json's header), an
// independent circuit simulator: AC-analysis resonances of LC tanks holding SPICE level-1 diode
// models (CJO, VJ, M) in all three arrangements, with and without blocking capacitor and stray.
// data: tests/fixtures/ngspice/cases.json, made by `node tests/fixtures/ngspice/generate.mjs`.
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { describe, expect, it } from 'vitest';
import { calibrateFixture } from './calibration';
import { partCapacitanceFromResonance, partEsrOhm, qualityFactor, resonanceFromPartCapacitance } from './convert';
import { fitJunction } from './fit';
import type { Arrangement } from './types';

type NgPoint = { biasV: number; resonanceHz: number; bandwidthHz?: number };
type NgCalibration = {
	id: string;
	kind: 'calibration';
	inductanceH: number;
	strayF: number;
	blockingF: number | null;
	references: { capacitanceF: number; resonanceHz: number }[];
};
type NgCase = {
	id: string;
	kind: 'capacitance' | 'loss';
	arrangement: Arrangement;
	inductanceH: number;
	strayF: number;
	blockingF: number | null;
	diodeModel: { CJO: number; VJ: number; M: number; IS: number; RS: number };
	packageCpF: number;
	points: NgPoint[];
};

const root = resolve(__dirname, '../../..');
const doc = JSON.parse(readFileSync(resolve(root, 'tests/fixtures/ngspice/cases.json'), 'utf8')) as {
	generatedBy: string;
	simulator: string;
	cases: (NgCase | NgCalibration)[];
};
const isPart = (c: NgCase | NgCalibration): c is NgCase => c.kind !== 'calibration';
const partCases = doc.cases.filter(isPart);
const capCases = partCases.filter((c) => c.kind === 'capacitance');
const lossCases = partCases.filter((c) => c.kind === 'loss');
const calCases = doc.cases.filter((c): c is NgCalibration => c.kind === 'calibration');

/** SPICE level-1 junction capacitance at reverse bias V (the model ngspice simulated). */
function spiceCj(c: NgCase, biasV: number): number {
	return c.diodeModel.CJO / Math.pow(1 + biasV / c.diodeModel.VJ, c.diodeModel.M) + c.packageCpF;
}

describe('ngspice fixture', () => {
	it('names the command and the simulator version', () => {
		expect(doc.generatedBy).toContain('generate.mjs');
		expect(doc.simulator).toMatch(/ngspice-\d+/);
		expect(capCases.length).toBe(24);
		expect(new Set(capCases.map((c) => c.arrangement)).size).toBe(3);
		expect(capCases.some((c) => c.diodeModel.M === 0.5)).toBe(true);
		expect(capCases.some((c) => c.diodeModel.M >= 1.5)).toBe(true);
	});

	it.each(capCases.map((c) => [c.id, c] as const))('%s: resonance converts back to Cj(V) within 0.1 %%', (_id, c) => {
		for (const p of c.points) {
			const r = partCapacitanceFromResonance({ ...c, resonanceHz: p.resonanceHz });
			expect(r.ok).toBe(true);
			// the required 0.1 %; the worst case seen when this was written was 4e-7
			if (r.ok) expect(Math.abs(r.capacitanceF / spiceCj(c, p.biasV) - 1)).toBeLessThan(1e-3);
		}
	});

	it.each(capCases.map((c) => [c.id, c] as const))('%s: forward direction gives the simulated resonance within 1 ppm', (_id, c) => {
		for (const p of c.points) {
			const r = resonanceFromPartCapacitance({ ...c, capacitanceF: spiceCj(c, p.biasV) });
			expect(r.ok).toBe(true);
			if (r.ok) expect(Math.abs(r.resonanceHz / p.resonanceHz - 1)).toBeLessThan(1e-6);
		}
	});

	it.each(calCases.map((c) => [c.id, c] as const))('%s: calibration from simulated references recovers L and the stray', (_id, c) => {
		const r = calibrateFixture({ references: c.references, blockingF: c.blockingF, at: 0 });
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(Math.abs(r.calibration.inductanceH / c.inductanceH - 1)).toBeLessThan(1e-6);
		expect(Math.abs(r.calibration.strayF - c.strayF)).toBeLessThan(1e-16);
		expect(r.calibration.residualPpm).toBeLessThan(1);
	});

	it.each(capCases.map((c) => [c.id, c] as const))('%s: the fit recovers CJO, VJ and M', (_id, c) => {
		const caps = c.points.map((p) => {
			const r = partCapacitanceFromResonance({ ...c, resonanceHz: p.resonanceHz });
			return r.ok ? r.capacitanceF : Number.NaN;
		});
		const fit = fitJunction(
			c.points.map((p) => p.biasV),
			caps
		);
		expect(fit.ok).toBe(true);
		if (!fit.ok) return;
		// tolerances are our choice: the converted points carry < 1e-6 relative error, and the worst
		// case seen when this was written was 3e-7 on CJO and 1e-7 on VJ and M
		expect(Math.abs(fit.params.cj0F / c.diodeModel.CJO - 1)).toBeLessThan(1e-5);
		expect(Math.abs(fit.params.vjV / c.diodeModel.VJ - 1)).toBeLessThan(1e-5);
		expect(Math.abs(fit.params.m / c.diodeModel.M - 1)).toBeLessThan(1e-5);
		expect(Math.abs(fit.params.cpF - c.packageCpF)).toBeLessThan(1e-16);
		expect(fit.rmsPct).toBeLessThan(0.01);
		expect(fit.poorFit).toBe(false);
	});

	it.each(lossCases.map((c) => [c.id, c] as const))('%s: ESR from the simulated bandwidth equals the diode RS within 1 %%', (_id, c) => {
		for (const p of c.points) {
			expect(p.bandwidthHz).toBeGreaterThan(0);
			const q = qualityFactor(p.resonanceHz, p.bandwidthHz ?? Number.NaN);
			expect(q.ok).toBe(true);
			if (!q.ok) continue;
			const esr = partEsrOhm({ ...c, resonanceHz: p.resonanceHz, q: q.q });
			expect(esr.ok).toBe(true);
			if (esr.ok) expect(Math.abs(esr.esrOhm / c.diodeModel.RS - 1)).toBeLessThan(0.01);
		}
	});

	// ngspice is installed wherever the tests run, so this always runs and fails when it is missing.
	it('live ngspice run reproduces a committed case', () => {
		expect(existsSync('/usr/bin/ngspice')).toBe(true);
		const id = 'hyperabrupt-antiseries2-cb1n-stray12p';
		const run = spawnSync('node', [resolve(root, 'tests/fixtures/ngspice/generate.mjs'), '--only', id], { encoding: 'utf8' });
		expect(run.status).toBe(0);
		const live = JSON.parse(run.stdout) as NgCase;
		const committed = partCases.find((c) => c.id === id);
		expect(committed).toBeDefined();
		live.points.forEach((p, i) => {
			const want = committed?.points[i]?.resonanceHz ?? Number.NaN;
			expect(Math.abs(p.resonanceHz / want - 1)).toBeLessThan(1e-9);
		});
	}, 30_000);
});
