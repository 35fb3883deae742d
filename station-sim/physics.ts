/**
 * Physical model of a varactor test station, independent of the server's measurement core:
 * the part's junction capacitance C(V) = Cj0 / (1 + V/Vj)^M + Cp with lot and part spread,
 * the LC tank it sits in, the resonance it shows, its bandwidth (from Q) and its leakage.
 * Pure: every random draw comes from the `Rng` passed in.
 */
import type { Rng } from './rng';

export type Arrangement = 'single' | 'parallel2' | 'antiseries2';

export interface Fixture {
	inductanceH: number;
	strayF: number;
	/** DC-blocking capacitor in series with the part branch, or null when there is none. */
	blockingF: number | null;
	arrangement: Arrangement;
}

export interface JunctionParams {
	cj0F: number;
	vjV: number;
	m: number;
	cpF: number;
}

/** Relative standard deviations, in percent, of each junction parameter. */
export interface SpreadPct {
	cj0: number;
	vj: number;
	m: number;
	cp: number;
}

export interface ProductModel {
	code: string;
	nominal: JunctionParams;
	lotSpreadPct: SpreadPct;
	partSpreadPct: SpreadPct;
	/** Q of the part at `qReferenceBiasV`: mean and standard deviation over parts. */
	qAtReference: { mean: number; sd: number };
	qReferenceBiasV: number;
	/** Q rises as capacitance falls: Q(V) = Q(ref) · (C(ref)/C(V))^qExponent. */
	qExponent: number;
	/** Leakage of one part: log-normal around `medianA`, with rare outliers. */
	leakage: { medianA: number; sigmaLn: number; minA: number; maxA: number; outlierProbability: number; outlierMinA: number; outlierMaxA: number };
	/** Temperature coefficient of the junction capacitance, ppm per kelvin, about 25 °C. */
	tempCoPpmPerK: number;
}

export type PhysicsError = { code: 'invalid-input'; message: string };
export type PhysicsResult<T> = { ok: true; value: T } | { ok: false; error: PhysicsError };

function fail<T>(message: string): PhysicsResult<T> {
	return { ok: false, error: { code: 'invalid-input', message } };
}

function isPositiveFinite(x: number): boolean {
	return Number.isFinite(x) && x > 0;
}

/*
 * Product models. Our own invented parts; the numbers are plausible values chosen for the demo,
 * not data of any real device.
 * KV-1405: abrupt junction (M ≈ 0.5), about 26 pF at 1 V and 7 pF at 25 V.
 * KV-2210H: hyperabrupt tuning part. The brief's Cj0 500 pF, Vj 2 V and Cp 1 pF are kept; with
 * M = 1.6 the 1 V / 8 V ratio would only be 6.7, so M = 2.3 is used to reach the intended ratio
 * of about 15 (C(1 V) ≈ 198 pF, C(8 V) ≈ 13.4 pF).
 */
export const PRODUCT_MODELS: Readonly<Record<string, ProductModel>> = {
	'KV-1405': {
		code: 'KV-1405',
		nominal: { cj0F: 40e-12, vjV: 0.75, m: 0.5, cpF: 0.3e-12 },
		lotSpreadPct: { cj0: 1.5, vj: 1.0, m: 1.0, cp: 3 },
		partSpreadPct: { cj0: 0.8, vj: 0.5, m: 0.4, cp: 2 },
		qAtReference: { mean: 250, sd: 30 },
		qReferenceBiasV: 1,
		qExponent: 0.5,
		leakage: { medianA: 2e-10, sigmaLn: 0.6, minA: 5e-11, maxA: 2e-9, outlierProbability: 0.003, outlierMinA: 2e-8, outlierMaxA: 5e-7 },
		tempCoPpmPerK: 150
	},
	'KV-2210H': {
		code: 'KV-2210H',
		nominal: { cj0F: 480e-12, vjV: 1.6, m: 1.9, cpF: 1.2e-12 },
		lotSpreadPct: { cj0: 2.0, vj: 1.5, m: 1.0, cp: 3 },
		partSpreadPct: { cj0: 1.0, vj: 0.6, m: 0.5, cp: 2 },
		qAtReference: { mean: 160, sd: 20 },
		qReferenceBiasV: 1,
		qExponent: 0.4,
		leakage: { medianA: 5e-10, sigmaLn: 0.6, minA: 5e-11, maxA: 2e-9, outlierProbability: 0.003, outlierMinA: 2e-8, outlierMaxA: 5e-7 },
		tempCoPpmPerK: 300
	}
};

export const DEFAULT_BIAS_POINTS_V: readonly number[] = [1, 2, 4, 8, 15, 25];

/** Reference capacitors of the calibration kit (each placed alone in the part socket). */
export const REFERENCE_CAPACITORS_F: readonly number[] = [10e-12, 47e-12, 100e-12, 220e-12];

/** Q of the tank inductor; high enough that the part's losses dominate the measured bandwidth. */
export const INDUCTOR_Q = 5000;

/** Resonance of an ideal LC tank, f = 1/(2π√(LC)); assumes L in henries and C in farads, both > 0. */
export function resonanceHz(inductanceH: number, capacitanceF: number): PhysicsResult<number> {
	if (!isPositiveFinite(inductanceH)) return fail(`inductanceH must be a positive finite number, got ${inductanceH}`);
	if (!isPositiveFinite(capacitanceF)) return fail(`capacitanceF must be a positive finite number, got ${capacitanceF}`);
	return { ok: true, value: 1 / (2 * Math.PI * Math.sqrt(inductanceH * capacitanceF)) };
}

/** Capacitance that resonates with L at f, C = 1/((2πf)²L); assumes both > 0. */
export function capacitanceForResonanceF(inductanceH: number, frequencyHz: number): PhysicsResult<number> {
	if (!isPositiveFinite(inductanceH)) return fail(`inductanceH must be a positive finite number, got ${inductanceH}`);
	if (!isPositiveFinite(frequencyHz)) return fail(`frequencyHz must be a positive finite number, got ${frequencyHz}`);
	const omega = 2 * Math.PI * frequencyHz;
	return { ok: true, value: 1 / (omega * omega * inductanceH) };
}

/** Two capacitors in series, C = C1·C2/(C1 + C2); assumes both > 0 (a null second one means a short, no capacitor). */
export function seriesF(firstF: number, secondF: number | null): PhysicsResult<number> {
	if (!isPositiveFinite(firstF)) return fail(`capacitance must be a positive finite number, got ${firstF}`);
	if (secondF === null) return { ok: true, value: firstF };
	if (!isPositiveFinite(secondF)) return fail(`capacitance must be a positive finite number, got ${secondF}`);
	return { ok: true, value: (firstF * secondF) / (firstF + secondF) };
}

/** Capacitance of the part branch for one part's capacitance; assumes the two parts of a pair are identical. */
export function branchCapacitanceF(partF: number, arrangement: Arrangement): PhysicsResult<number> {
	if (!isPositiveFinite(partF)) return fail(`part capacitance must be a positive finite number, got ${partF}`);
	switch (arrangement) {
		case 'single':
			return { ok: true, value: partF };
		case 'parallel2':
			return { ok: true, value: 2 * partF };
		case 'antiseries2':
			// Back to back for the signal: two equal capacitors in series.
			return { ok: true, value: partF / 2 };
		default:
			return fail(`unknown arrangement ${String(arrangement)}`);
	}
}

/** Tank capacitance C_tank = C_stray + series(C_branch, C_blocking); assumes a validated fixture and a branch capacitance > 0. */
export function tankCapacitanceF(fixture: Fixture, branchF: number): PhysicsResult<number> {
	if (!(Number.isFinite(fixture.strayF) && fixture.strayF >= 0)) return fail(`strayF must be finite and >= 0, got ${fixture.strayF}`);
	const inSeries = seriesF(branchF, fixture.blockingF);
	if (!inSeries.ok) return inSeries;
	return { ok: true, value: fixture.strayF + inSeries.value };
}

/** Junction capacitance C(V) = Cj0/(1+V/Vj)^M + Cp at reverse bias V; assumes V > −Vj and positive parameters. */
export function junctionCapacitanceF(params: JunctionParams, biasV: number): PhysicsResult<number> {
	const { cj0F, vjV, m, cpF } = params;
	if (!isPositiveFinite(cj0F) || !isPositiveFinite(vjV) || !isPositiveFinite(m)) return fail('cj0F, vjV and m must be positive finite numbers');
	if (!(Number.isFinite(cpF) && cpF >= 0)) return fail(`cpF must be finite and >= 0, got ${cpF}`);
	if (!Number.isFinite(biasV)) return fail(`biasV must be finite, got ${biasV}`);
	const base = 1 + biasV / vjV;
	if (!(base > 0)) return fail(`biasV ${biasV} forward-biases the junction past Vj`);
	return { ok: true, value: cj0F / Math.pow(base, m) + cpF };
}

function scaled(value: number, pct: number, rng: Rng): number {
	return value * (1 + (pct / 100) * rng.normal());
}

/** Lot centre parameters drawn around the product's nominal; assumes a valid model. `cj0ShiftPct` models a bad lot. */
export function sampleLotParams(model: ProductModel, rng: Rng, cj0ShiftPct = 0): JunctionParams {
	const n = model.nominal;
	const s = model.lotSpreadPct;
	return {
		cj0F: scaled(n.cj0F, s.cj0, rng) * (1 + cj0ShiftPct / 100),
		vjV: scaled(n.vjV, s.vj, rng),
		m: scaled(n.m, s.m, rng),
		cpF: Math.max(0, scaled(n.cpF, s.cp, rng))
	};
}

export interface Part {
	junction: JunctionParams;
	qAtReference: number;
	/** Leakage of one part at the leakage test bias. */
	leakageA: number;
}

/** One part drawn around its lot centre; assumes a valid model and lot parameters. */
export function samplePart(model: ProductModel, lot: JunctionParams, rng: Rng): Part {
	const s = model.partSpreadPct;
	const junction: JunctionParams = {
		cj0F: scaled(lot.cj0F, s.cj0, rng),
		vjV: scaled(lot.vjV, s.vj, rng),
		m: scaled(lot.m, s.m, rng),
		cpF: Math.max(0, scaled(lot.cpF, s.cp, rng))
	};
	// A floor keeps a rare far-tail draw from giving a non-physical Q.
	const qAtReference = Math.max(30, model.qAtReference.mean + model.qAtReference.sd * rng.normal());
	const leak = model.leakage;
	let leakageA: number;
	if (rng.next() < leak.outlierProbability) {
		// Outliers spread evenly on a log scale.
		leakageA = leak.outlierMinA * Math.pow(leak.outlierMaxA / leak.outlierMinA, rng.next());
	} else {
		leakageA = Math.min(leak.maxA, Math.max(leak.minA, leak.medianA * Math.exp(leak.sigmaLn * rng.normal())));
	}
	return { junction, qAtReference, leakageA };
}

/** Ambient temperature near 24 °C: slow ±0.8 K swing over 90 min plus reading noise; assumes elapsedMin is finite. */
export function ambientTemperatureC(elapsedMin: number, rng: Rng): number {
	const t = Number.isFinite(elapsedMin) ? elapsedMin : 0;
	return 24 + 0.8 * Math.sin((2 * Math.PI * t) / 90) + 0.15 * rng.normal();
}

export interface MeasurementConditions {
	/** The fixture as it really is now (after any drift), not as the station record describes it. */
	fixture: Fixture;
	temperatureC: number;
	/** Standard deviation of the relative frequency reading error, ppm. */
	frequencyNoisePpm: number;
	/** Standard deviation of the relative bandwidth reading error, percent. */
	bandwidthNoisePct: number;
}

export interface MeasuredPoint {
	biasV: number;
	resonanceHz: number;
	bandwidthHz: number;
}

export interface MeasuredUnit {
	temperatureC: number;
	leakageA: number;
	points: MeasuredPoint[];
}

/** Part Q at a bias; assumes positive capacitances. Q rises as C falls (series resistance roughly constant). */
export function partQ(model: ProductModel, part: Part, capacitanceAtBiasF: number, capacitanceAtReferenceF: number): number {
	return part.qAtReference * Math.pow(capacitanceAtReferenceF / capacitanceAtBiasF, model.qExponent);
}

/**
 * Sweep one unit (one part, or an identical pair per the fixture's arrangement) over the bias points.
 * Assumes the fixture is the true one; the measured Q combines the part's Q with the inductor's
 * (1/Q = 1/Q_part + 1/Q_L), treating stray and blocking capacitors as lossless.
 */
export function measureUnit(model: ProductModel, part: Part, biasPointsV: readonly number[], conditions: MeasurementConditions, rng: Rng): PhysicsResult<MeasuredUnit> {
	const { fixture } = conditions;
	if (biasPointsV.length === 0) return fail('at least one bias point is needed');
	const tempFactor = 1 + (model.tempCoPpmPerK * 1e-6) * (conditions.temperatureC - 25);
	const atReference = junctionCapacitanceF(part.junction, model.qReferenceBiasV);
	if (!atReference.ok) return atReference;
	const points: MeasuredPoint[] = [];
	for (const biasV of biasPointsV) {
		const cj = junctionCapacitanceF(part.junction, biasV);
		if (!cj.ok) return cj;
		const partF = cj.value * tempFactor;
		const branch = branchCapacitanceF(partF, fixture.arrangement);
		if (!branch.ok) return branch;
		const tank = tankCapacitanceF(fixture, branch.value);
		if (!tank.ok) return tank;
		const f = resonanceHz(fixture.inductanceH, tank.value);
		if (!f.ok) return f;
		const q = 1 / (1 / partQ(model, part, cj.value, atReference.value) + 1 / INDUCTOR_Q);
		const resonance = f.value * (1 + conditions.frequencyNoisePpm * 1e-6 * rng.normal());
		const bandwidth = (f.value / q) * Math.max(0.2, 1 + (conditions.bandwidthNoisePct / 100) * rng.normal());
		points.push({ biasV, resonanceHz: resonance, bandwidthHz: bandwidth });
	}
	// Both parts of a pair are biased, so both leak into the bias supply.
	const parts = fixture.arrangement === 'single' ? 1 : 2;
	const leakageA = Math.max(0, part.leakageA * parts * (1 + 0.02 * rng.normal()) + 5e-12 * rng.normal());
	return { ok: true, value: { temperatureC: conditions.temperatureC, leakageA, points } };
}

export interface ReferenceReading {
	capacitanceF: number;
	resonanceHz: number;
}

/** Resonances with each reference capacitor alone in the socket (in series with the blocking capacitor, whatever the arrangement); assumes a true fixture. */
export function measureReferences(fixture: Fixture, referencesF: readonly number[], frequencyNoisePpm: number, rng: Rng): PhysicsResult<ReferenceReading[]> {
	const readings: ReferenceReading[] = [];
	for (const capacitanceF of referencesF) {
		const tank = tankCapacitanceF(fixture, capacitanceF);
		if (!tank.ok) return tank;
		const f = resonanceHz(fixture.inductanceH, tank.value);
		if (!f.ok) return f;
		readings.push({ capacitanceF, resonanceHz: f.value * (1 + frequencyNoisePpm * 1e-6 * rng.normal()) });
	}
	return { ok: true, value: readings };
}

/** A plan as far as the simulator needs it (the server's shape, read leniently). */
export interface PlanPoint {
	biasV: number;
	minF?: number | null;
	maxF?: number | null;
}

/**
 * A model for a product the simulator does not know, fitted to the mid-points of the plan's limits.
 * Assumes limits in farads. With two or more limited points it grid-searches Vj and fits Cj0 and M
 * by least squares on ln(C − Cp) against ln(1 + V/Vj), Cp fixed at 1 % of the smallest mid-point;
 * with one point it keeps M = 0.5 and Vj = 0.75 V; with none it returns the KV-1405 model.
 */
export function modelFromPlan(code: string, points: readonly PlanPoint[] | null | undefined): ProductModel {
	const base = PRODUCT_MODELS['KV-1405'];
	const fallback: ProductModel = base ?? defaultModel();
	const mids: { v: number; c: number }[] = [];
	for (const p of points ?? []) {
		const lo = p.minF;
		const hi = p.maxF;
		if (typeof lo === 'number' && typeof hi === 'number' && isPositiveFinite(lo) && isPositiveFinite(hi) && Number.isFinite(p.biasV) && p.biasV >= 0) {
			mids.push({ v: p.biasV, c: (lo + hi) / 2 });
		}
	}
	if (mids.length === 0) return { ...fallback, code };
	const smallest = Math.min(...mids.map((p) => p.c));
	const cpF = 0.01 * smallest;
	let best: { err: number; params: JunctionParams } | null = null;
	if (mids.length === 1) {
		const only = mids[0];
		if (only === undefined) return { ...fallback, code };
		const vjV = 0.75;
		const m = 0.5;
		best = { err: 0, params: { cj0F: (only.c - cpF) * Math.pow(1 + only.v / vjV, m), vjV, m, cpF } };
	} else {
		for (let i = 0; i <= 60; i += 1) {
			const vjV = 0.2 * Math.pow(4 / 0.2, i / 60); // 0.2 V .. 4 V, log-spaced
			const xs = mids.map((p) => Math.log(1 + p.v / vjV));
			const ys = mids.map((p) => Math.log(p.c - cpF));
			const n = xs.length;
			const mx = xs.reduce((a, b) => a + b, 0) / n;
			const my = ys.reduce((a, b) => a + b, 0) / n;
			let sxx = 0;
			let sxy = 0;
			for (let k = 0; k < n; k += 1) {
				const dx = (xs[k] ?? 0) - mx;
				sxx += dx * dx;
				sxy += dx * ((ys[k] ?? 0) - my);
			}
			if (!(sxx > 0)) continue;
			const slope = sxy / sxx;
			const m = -slope;
			if (!(m > 0.1 && m < 4)) continue;
			const intercept = my - slope * mx;
			let err = 0;
			for (let k = 0; k < n; k += 1) {
				const r = (ys[k] ?? 0) - (intercept + slope * (xs[k] ?? 0));
				err += r * r;
			}
			if (best === null || err < best.err) best = { err, params: { cj0F: Math.exp(intercept), vjV, m, cpF } };
		}
	}
	if (best === null) return { ...fallback, code };
	return { ...fallback, code, nominal: best.params };
}

function defaultModel(): ProductModel {
	return {
		code: 'default',
		nominal: { cj0F: 40e-12, vjV: 0.75, m: 0.5, cpF: 0.3e-12 },
		lotSpreadPct: { cj0: 1.5, vj: 1, m: 1, cp: 3 },
		partSpreadPct: { cj0: 0.8, vj: 0.5, m: 0.4, cp: 2 },
		qAtReference: { mean: 250, sd: 30 },
		qReferenceBiasV: 1,
		qExponent: 0.5,
		leakage: { medianA: 2e-10, sigmaLn: 0.6, minA: 5e-11, maxA: 2e-9, outlierProbability: 0.003, outlierMinA: 2e-8, outlierMaxA: 5e-7 },
		tempCoPpmPerK: 150
	};
}

/** The model for a product code: a known part, else one fitted from the plan's limits, else the default. */
export function modelForProduct(code: string | null | undefined, planPoints?: readonly PlanPoint[] | null): ProductModel {
	const known = code ? PRODUCT_MODELS[code] : undefined;
	if (known) return known;
	return modelFromPlan(code ?? 'unknown', planPoints);
}
