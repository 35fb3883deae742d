import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import {
	INDUCTOR_Q,
	PRODUCT_MODELS,
	branchCapacitanceF,
	capacitanceForResonanceF,
	junctionCapacitanceF,
	measureReferences,
	measureUnit,
	modelForProduct,
	modelFromPlan,
	partQ,
	resonanceHz,
	samplePart,
	seriesF,
	tankCapacitanceF,
	type Arrangement,
	type Fixture
} from './physics';
import { createRng } from './rng';

function value<T>(r: { ok: true; value: T } | { ok: false; error: { message: string } }): T {
	if (!r.ok) throw new Error(`unexpected failure: ${r.error.message}`);
	return r.value;
}

describe('resonanceHz: f = 1/(2π√(LC))', () => {
	// Identity: the textbook LC resonance formula and its inverse C = 1/((2πf)²L).
	it.each([
		[1e-3, 207e-12],
		[1e-4, 1e-11],
		[1e-6, 1e-9],
		[2.5e-5, 3.3e-12]
	])('L = %s H, C = %s F: round-trips through the inverse and matches the formula', (l, c) => {
		const f = value(resonanceHz(l, c));
		expect(f).toBeCloseTo(1 / (2 * Math.PI * Math.sqrt(l * c)), 6);
		expect(value(capacitanceForResonanceF(l, f)) / c).toBeCloseTo(1, 12);
	});

	it('a 1 mH tank near 350 kHz holds about 207 pF (common practice)', () => {
		const c = value(capacitanceForResonanceF(1e-3, 350e3));
		expect(c).toBeGreaterThan(205e-12);
		expect(c).toBeLessThan(209e-12);
	});

	it.each([
		[0, 1e-11],
		[-1e-3, 1e-11],
		[1e-3, 0],
		[1e-3, Number.NaN],
		[Number.POSITIVE_INFINITY, 1e-11],
		[1e-3, Number.NEGATIVE_INFINITY]
	])('rejects L = %s, C = %s with a typed error, never NaN', (l, c) => {
		const r = resonanceHz(l, c);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('invalid-input');
	});
});

describe('series and parallel combinations (worked by hand)', () => {
	// Hand calculation: 1/(1/10 pF + 1/100 nF) = 10e-12·1e-7/(1e-7 + 1e-11) = 9.999000099990e-12 F.
	it.each([
		[10e-12, 100e-9, 9.99900009999e-12],
		[20e-12, 20e-12, 10e-12],
		[47e-12, null, 47e-12],
		[1e-12, 3e-12, 0.75e-12]
	])('series(%s, %s) = %s', (a, b, expected) => {
		expect(value(seriesF(a, b)) / expected).toBeCloseTo(1, 10);
	});

	it.each<[Arrangement, number, number]>([
		['single', 20e-12, 20e-12],
		['parallel2', 20e-12, 40e-12],
		['antiseries2', 20e-12, 10e-12]
	])('%s branch of 20 pF parts is %s F', (arrangement, part, expected) => {
		expect(value(branchCapacitanceF(part, arrangement))).toBeCloseTo(expected, 20);
	});

	it('tank = stray + series(branch, blocking): 3 pF + series(20 pF, 100 nF) = 22.996000799840 pF (by hand)', () => {
		const fixture: Fixture = { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' };
		expect(value(tankCapacitanceF(fixture, 20e-12)) / 22.99600079984e-12).toBeCloseTo(1, 10);
	});

	it.each([
		[0, null],
		[Number.NaN, 1e-7],
		[1e-12, -1]
	])('series rejects %s with %s', (a, b) => {
		expect(seriesF(a, b).ok).toBe(false);
	});
});

describe('junction capacitance C(V) = Cj0/(1+V/Vj)^M + Cp', () => {
	it('KV-1405 at 1 V: 40 pF/√(1 + 1/0.75) + 0.3 pF = 26.4865 pF (by hand: √(7/3) = 1.527525)', () => {
		const model = PRODUCT_MODELS['KV-1405'];
		expect(model).toBeDefined();
		if (!model) return;
		expect(value(junctionCapacitanceF(model.nominal, 1)) * 1e12).toBeCloseTo(40 / 1.5275252 + 0.3, 4);
		expect(value(junctionCapacitanceF(model.nominal, 0)) * 1e12).toBeCloseTo(40.3, 10);
	});

	it('KV-2210H: C(1 V) ≈ 192.02 pF, C(8 V) ≈ 17.15 pF, ratio ≈ 11.2, inside the demo plan windows', () => {
		// Hand calculation: 480 pF / (1 + 1/1.6)^1.9 + 1.2 pF = 480 / 2.5155 + 1.2 = 192.02 pF;
		// at 8 V: (1 + 8/1.6)^1.9 = 6^1.9 = 30.09, 480 / 30.09 + 1.2 = 17.15 pF.
		const model = PRODUCT_MODELS['KV-2210H'];
		expect(model).toBeDefined();
		if (!model) return;
		const c1 = value(junctionCapacitanceF(model.nominal, 1)) * 1e12;
		const c8 = value(junctionCapacitanceF(model.nominal, 8)) * 1e12;
		expect(c1).toBeCloseTo(192.02, 1);
		expect(c8).toBeCloseTo(17.15, 1);
		expect(c1 / c8).toBeGreaterThan(10.0);
		expect(c1 / c8).toBeLessThan(12.5);
	});

	it.each([
		[-0.75, 'exactly at -Vj'],
		[-2, 'forward past Vj'],
		[Number.NaN, 'NaN'],
		[Number.POSITIVE_INFINITY, '+Infinity']
	])('bias %s (%s) is refused', (bias) => {
		const r = junctionCapacitanceF({ cj0F: 40e-12, vjV: 0.75, m: 0.5, cpF: 0 }, bias);
		expect(r.ok).toBe(false);
	});
});

/*
 * Independent check with ngspice (Berkeley SPICE descendant, /usr/bin/ngspice): the tank is drawn as
 * a netlist (components placed in their topology, not our formulas), driven by a 1 A AC current
 * source; the resonance is where the tank voltage's phase crosses zero and the −3 dB points bound
 * the bandwidth. ngspice prints 7 significant digits, so agreement is asked to 1 ppm.
 */
const workDir = mkdtempSync(join(tmpdir(), 'sim-ngspice-'));
afterAll(() => rmSync(workDir, { recursive: true, force: true }));

interface SpiceAnswer {
	f0: number;
	flo: number;
	fhi: number;
}

function runSpice(name: string, elements: string[], fStart: number, fStop: number): SpiceAnswer {
	const netlist = [
		`* ${name}`,
		'I1 0 out AC 1',
		// 1 TΩ leaks give every node a DC path for the operating point; at MHz they are negligible.
		'Rmid mid 0 1e12',
		...elements,
		`.ac lin 40001 ${fStart} ${fStop}`,
		'.control',
		'run',
		'meas ac f0 when vp(out)=0',
		'meas ac vmax max vm(out)',
		'let half = vmax/sqrt(2)',
		'meas ac flo when vm(out)=half rise=1',
		'meas ac fhi when vm(out)=half fall=1',
		'.endc',
		'.end',
		''
	].join('\n');
	const file = join(workDir, `${name}.cir`);
	writeFileSync(file, netlist);
	// ngspice -b exits 1 after a .control block ("no simulations run"), so its printout is what counts.
	const run = spawnSync('/usr/bin/ngspice', ['-b', file], { encoding: 'utf8' });
	if (run.error) throw run.error;
	const out = `${run.stdout}\n${run.stderr}`;
	const read = (label: string): number => {
		const m = new RegExp(`^${label}\\s+=\\s+([-+0-9.eE]+)`, 'm').exec(out);
		if (!m?.[1]) throw new Error(`ngspice printed no ${label}:\n${out}`);
		return Number(m[1]);
	};
	return { f0: read('f0'), flo: read('flo'), fhi: read('fhi') };
}

describe('tank resonance against ngspice', () => {
	const partF = 20e-12;
	// Each case: fixture, and the netlist of the part branch between node `out` and ground.
	const cases: { name: string; fixture: Fixture; branch: string[] }[] = [
		{ name: 'single-blocked', fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' }, branch: ['Cb out mid 100n', 'Cd mid 0 20p'] },
		{ name: 'single-direct', fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: null, arrangement: 'single' }, branch: ['Cd out 0 20p'] },
		{ name: 'parallel2', fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-9, arrangement: 'parallel2' }, branch: ['Cb out mid 1n', 'Cd1 mid 0 20p', 'Cd2 mid 0 20p'] },
		{ name: 'antiseries2', fixture: { inductanceH: 2.2e-5, strayF: 5e-12, blockingF: 1e-7, arrangement: 'antiseries2' }, branch: ['Cb out mid 100n', 'Cd1 mid k 20p', 'Cd2 k 0 20p', 'Rk k 0 1e12'] }
	];
	it.each(cases)('$name', ({ name, fixture, branch }) => {
		const branchF = value(branchCapacitanceF(partF, fixture.arrangement));
		const ours = value(resonanceHz(fixture.inductanceH, value(tankCapacitanceF(fixture, branchF))));
		const spice = runSpice(name, [`L1 out 0 ${fixture.inductanceH}`, `Cs out 0 ${fixture.strayF}`, 'R1 out 0 1e7', ...branch], ours * 0.99, ours * 1.01);
		expect(Math.abs(spice.f0 / ours - 1)).toBeLessThan(1e-6);
	});

	it('a 47 pF reference alone in the socket, in series with the blocking capacitor', () => {
		const fixture: Fixture = { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'parallel2' };
		const reading = value(measureReferences(fixture, [47e-12], 0, createRng(1)))[0];
		expect(reading).toBeDefined();
		if (!reading) return;
		const spice = runSpice('reference', ['L1 out 0 1e-4', 'Cs out 0 3e-12', 'R1 out 0 1e7', 'Cb out mid 100n', 'Cr mid 0 47p'], reading.resonanceHz * 0.99, reading.resonanceHz * 1.01);
		expect(Math.abs(spice.f0 / reading.resonanceHz - 1)).toBeLessThan(1e-6);
	});

	it('the reported bandwidth is the −3 dB width of a tank with that Q (parallel RLC, Q = R/(ω0·L))', () => {
		const model = PRODUCT_MODELS['KV-1405'];
		if (!model) throw new Error('KV-1405 missing');
		const part = samplePart(model, model.nominal, createRng(42));
		const fixture: Fixture = { inductanceH: 1e-4, strayF: 3e-12, blockingF: null, arrangement: 'single' };
		const unit = value(measureUnit(model, part, [1], { fixture, temperatureC: 25, frequencyNoisePpm: 0, bandwidthNoisePct: 0 }, createRng(1)));
		const point = unit.points[0];
		if (!point) throw new Error('no point');
		const cAt1 = value(junctionCapacitanceF(part.junction, 1));
		const q = 1 / (1 / partQ(model, part, cAt1, cAt1) + 1 / INDUCTOR_Q);
		const rOhm = q * 2 * Math.PI * point.resonanceHz * fixture.inductanceH;
		const spice = runSpice('bandwidth', ['L1 out 0 1e-4', 'Cs out 0 3e-12', `Cd out 0 ${cAt1}`, `R1 out 0 ${rOhm}`], point.resonanceHz * 0.97, point.resonanceHz * 1.03);
		expect(Math.abs(spice.f0 / point.resonanceHz - 1)).toBeLessThan(1e-6);
		expect((spice.fhi - spice.flo) / point.bandwidthHz).toBeCloseTo(1, 3);
	});
});

describe('part and unit model', () => {
	it('Q at low bias lies in 100–400 and rises with bias; leakage mostly in 0.05–2 nA', () => {
		const model = PRODUCT_MODELS['KV-1405'];
		if (!model) throw new Error('KV-1405 missing');
		const rng = createRng(7);
		const fixture: Fixture = { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' };
		let inRange = 0;
		let leakInRange = 0;
		const n = 2000;
		for (let i = 0; i < n; i += 1) {
			const part = samplePart(model, model.nominal, rng);
			const unit = value(measureUnit(model, part, [1, 25], { fixture, temperatureC: 24, frequencyNoisePpm: 0, bandwidthNoisePct: 0 }, rng));
			const [low, high] = unit.points;
			if (!low || !high) throw new Error('two points expected');
			const qLow = low.resonanceHz / low.bandwidthHz;
			const qHigh = high.resonanceHz / high.bandwidthHz;
			expect(qHigh).toBeGreaterThan(qLow);
			if (qLow >= 100 && qLow <= 400) inRange += 1;
			if (unit.leakageA >= 0.05e-9 * 0.9 && unit.leakageA <= 2e-9 * 1.1) leakInRange += 1;
		}
		expect(inRange / n).toBeGreaterThan(0.99);
		expect(leakInRange / n).toBeGreaterThan(0.98);
	});

	it('parallel2 resonates lower than single, antiseries2 higher (more / less branch capacitance)', () => {
		const model = PRODUCT_MODELS['KV-1405'];
		if (!model) throw new Error('KV-1405 missing');
		const part = samplePart(model, model.nominal, createRng(3));
		const f = (arrangement: Arrangement): number => {
			const unit = value(measureUnit(model, part, [4], { fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement }, temperatureC: 25, frequencyNoisePpm: 0, bandwidthNoisePct: 0 }, createRng(1)));
			return unit.points[0]?.resonanceHz ?? 0;
		};
		expect(f('parallel2')).toBeLessThan(f('single'));
		expect(f('antiseries2')).toBeGreaterThan(f('single'));
	});

	it('refuses an empty bias list and a bias past −Vj', () => {
		const model = PRODUCT_MODELS['KV-1405'];
		if (!model) throw new Error('KV-1405 missing');
		const part = samplePart(model, model.nominal, createRng(3));
		const conditions = { fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' as const }, temperatureC: 25, frequencyNoisePpm: 0, bandwidthNoisePct: 0 };
		expect(measureUnit(model, part, [], conditions, createRng(1)).ok).toBe(false);
		expect(measureUnit(model, part, [1, -5], conditions, createRng(1)).ok).toBe(false);
	});
});

describe('model for an unknown product, from the plan limits', () => {
	it('passes through the two mid-points of a two-point plan (checked with the formula by hand)', () => {
		const points = [
			{ biasV: 1, minF: 29e-12, maxF: 33e-12 },
			{ biasV: 4 },
			{ biasV: 25, minF: 2.2e-12, maxF: 2.8e-12 }
		];
		const model = modelFromPlan('VX-210', points);
		expect(model.code).toBe('VX-210');
		const { cj0F, vjV, m, cpF } = model.nominal;
		const at = (v: number): number => cj0F / Math.pow(1 + v / vjV, m) + cpF;
		// Two points fix Cj0 and M exactly for each Vj on the grid, so both mid-points are met.
		expect(at(1) / 31e-12).toBeCloseTo(1, 6);
		expect(at(25) / 2.5e-12).toBeCloseTo(1, 6);
	});

	it('one limited point: meets it with M = 0.5, Vj = 0.75 V', () => {
		const model = modelFromPlan('X', [{ biasV: 2, minF: 9e-12, maxF: 11e-12 }]);
		expect(model.nominal.m).toBe(0.5);
		const c = value(junctionCapacitanceF(model.nominal, 2));
		expect(c / 10e-12).toBeCloseTo(1, 10);
	});

	it.each([
		['no plan', null],
		['no limits', [{ biasV: 1 }, { biasV: 4 }]],
		['NaN limits', [{ biasV: 1, minF: Number.NaN, maxF: 3e-11 }]],
		['infinite limits', [{ biasV: 1, minF: 1e-11, maxF: Number.POSITIVE_INFINITY }]]
	])('%s falls back to the default (KV-1405) parameters', (_label, points) => {
		const model = modelForProduct('UNKNOWN-1', points);
		expect(model.code).toBe('UNKNOWN-1');
		expect(model.nominal).toEqual(PRODUCT_MODELS['KV-1405']?.nominal);
	});

	it('known codes keep their own model whatever the plan says', () => {
		expect(modelForProduct('KV-2210H', [{ biasV: 1, minF: 1e-12, maxF: 2e-12 }]).nominal.cj0F).toBe(480e-12);
	});
});
