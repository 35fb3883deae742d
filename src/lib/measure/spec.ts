/**
 * Spec judgement and bins.
 *
 * Default bins: 1 good; capacitance 2; ratio 3; q 4; leakage 5; fit 6; measurement 7 (a reading
 * that could not be converted, or a quantity the plan judges but the unit did not provide).
 * When several tests fail the bin of the first failing category in this fixed priority wins:
 *   measurement, capacitance, ratio, q, leakage, fit
 * (a bad measurement makes every other result untrustworthy; after that, the order of the bin
 * numbers). Every failure is still reported. Limits are inclusive: a value exactly on a limit passes.
 *
 * Capacitance at a plan bias and the ratio use the measured point at that bias when there is one,
 * otherwise the fitted model; Q uses the measured point only (there is no model of Q).
 */
import { capacitanceAtBiasF } from './fit';
import type { JunctionParams, SpecFailure, SpecPlan, SpecTestCategory } from './types';

export const GOOD_BIN = 1;

export const DEFAULT_BINS: Readonly<Record<SpecTestCategory, number>> = {
	capacitance: 2,
	ratio: 3,
	q: 4,
	leakage: 5,
	fit: 6,
	measurement: 7
};

export const BIN_PRIORITY: readonly SpecTestCategory[] = ['measurement', 'capacitance', 'ratio', 'q', 'leakage', 'fit'];

/** Two biases closer than this are the same plan point (V). */
export const BIAS_MATCH_V = 1e-6;

export type PlanError = { path: string; message: string };

const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** Formats a finite bias for test names: `1`, `0.5`, `25` (6 significant digits at most). */
export function biasLabel(biasV: number): string {
	return Number.isInteger(biasV) ? String(biasV) : String(Number(biasV.toPrecision(6)));
}

/**
 * Semantic validation of a plan whose shape is already SpecPlan (the server checks the shape).
 * Assumes nothing about the numbers: non-finite values are reported. Returns every error found.
 */
export function validateSpecPlan(plan: SpecPlan): { ok: true; plan: SpecPlan } | { ok: false; errors: PlanError[] } {
	const errors: PlanError[] = [];
	const err = (path: string, message: string) => errors.push({ path, message });
	if (!Array.isArray(plan.points) || plan.points.length === 0) err('points', 'must have at least one point');
	const biases: number[] = [];
	(plan.points ?? []).forEach((pt, i) => {
		const at = `points.${i}`;
		if (!isNum(pt.biasV)) err(`${at}.biasV`, 'must be a finite number');
		else if (pt.biasV < 0) err(`${at}.biasV`, 'must be a reverse bias >= 0 V');
		else {
			const dup = biases.findIndex((b) => Math.abs(b - pt.biasV) <= BIAS_MATCH_V);
			if (dup >= 0) err(`${at}.biasV`, `duplicates points.${dup}.biasV`);
		}
		biases.push(isNum(pt.biasV) ? pt.biasV : Number.NaN);
		for (const key of ['minF', 'maxF'] as const) {
			const v = pt[key];
			if (v !== undefined && !(isNum(v) && v > 0)) err(`${at}.${key}`, 'must be a positive finite capacitance');
		}
		if (isNum(pt.minF) && isNum(pt.maxF) && !(pt.minF < pt.maxF)) err(`${at}.minF`, 'must be below maxF');
	});
	const inPoints = (v: number) => biases.some((b) => Math.abs(b - v) <= BIAS_MATCH_V);
	if (plan.ratio) {
		const r = plan.ratio;
		if (!isNum(r.lowBiasV)) err('ratio.lowBiasV', 'must be a finite number');
		else if (!inPoints(r.lowBiasV)) err('ratio.lowBiasV', 'must be one of the points');
		if (!isNum(r.highBiasV)) err('ratio.highBiasV', 'must be a finite number');
		else if (!inPoints(r.highBiasV)) err('ratio.highBiasV', 'must be one of the points');
		if (isNum(r.lowBiasV) && isNum(r.highBiasV) && !(r.lowBiasV < r.highBiasV)) err('ratio.lowBiasV', 'must be below highBiasV');
		for (const key of ['min', 'max'] as const) {
			const v = r[key];
			if (v !== undefined && !(isNum(v) && v > 0)) err(`ratio.${key}`, 'must be a positive finite number');
		}
		if (isNum(r.min) && isNum(r.max) && !(r.min < r.max)) err('ratio.min', 'must be below max');
		if (r.min === undefined && r.max === undefined) err('ratio', 'needs min or max');
	}
	if (plan.q) {
		if (!isNum(plan.q.biasV)) err('q.biasV', 'must be a finite number');
		else if (!inPoints(plan.q.biasV)) err('q.biasV', 'must be one of the points');
		if (!(isNum(plan.q.min) && plan.q.min > 0)) err('q.min', 'must be a positive finite number');
	}
	if (plan.leakage) {
		if (!(isNum(plan.leakage.biasV) && plan.leakage.biasV >= 0)) err('leakage.biasV', 'must be a finite reverse bias >= 0 V');
		if (!(isNum(plan.leakage.maxA) && plan.leakage.maxA > 0)) err('leakage.maxA', 'must be a positive finite current');
	}
	if (plan.fit && !(isNum(plan.fit.maxRmsPct) && plan.fit.maxRmsPct > 0)) err('fit.maxRmsPct', 'must be a positive finite number');
	if (plan.matching) {
		if (!(Number.isInteger(plan.matching.setSize) && plan.matching.setSize >= 2)) err('matching.setSize', 'must be an integer >= 2');
		if (!(isNum(plan.matching.tolerancePct) && plan.matching.tolerancePct > 0 && plan.matching.tolerancePct < 100)) {
			err('matching.tolerancePct', 'must be in (0, 100)');
		}
	}
	if (plan.bins) {
		for (const [key, v] of Object.entries(plan.bins)) {
			if (!(key in DEFAULT_BINS)) err(`bins.${key}`, 'is not a test category');
			else if (!(Number.isInteger(v) && (v ?? 0) >= 2)) err(`bins.${key}`, `must be an integer >= 2 (bin ${GOOD_BIN} is good)`);
		}
	}
	if (plan.spc?.baselineParts !== undefined) {
		const b = plan.spc.baselineParts;
		if (!(Number.isInteger(b) && b >= 2)) err('spc.baselineParts', 'must be an integer >= 2');
	}
	return errors.length === 0 ? { ok: true, plan } : { ok: false, errors };
}

export type JudgeInput = {
	plan: SpecPlan;
	/** measured points of ONE part; capacitanceF/q null when that reading was unusable */
	points: { biasV: number; capacitanceF: number | null; q: number | null }[];
	fit: { params: JunctionParams; rmsPct: number } | null;
	leakageA: number | null;
	/** failures found before judging (e.g. unconvertible readings) */
	priorFailures?: SpecFailure[];
};

export type Judgement = { pass: boolean; bin: number; failures: SpecFailure[] };

/** Judges one unit against a plan already accepted by validateSpecPlan; returns every failure. */
export function judgeUnit(input: JudgeInput): Judgement {
	const { plan } = input;
	const failures: SpecFailure[] = [...(input.priorFailures ?? [])];
	const measured = (biasV: number) => input.points.find((p) => Math.abs(p.biasV - biasV) <= BIAS_MATCH_V);
	const capAt = (biasV: number): number | null => {
		const pt = measured(biasV);
		if (pt) return pt.capacitanceF;
		if (input.fit) {
			const c = capacitanceAtBiasF(input.fit.params, biasV);
			if (c.ok) return c.capacitanceF;
		}
		return null;
	};
	const check = (test: string, category: SpecTestCategory, value: number | null, low: number | null, high: number | null) => {
		if (value === null || !Number.isFinite(value)) {
			failures.push({ test, category: 'measurement', value: null, low, high });
			return;
		}
		if ((low !== null && value < low) || (high !== null && value > high)) failures.push({ test, category, value, low, high });
	};
	const prior = failures.length;
	const already = (test: string) => prior > 0 && failures.some((f) => f.test === test);
	for (const pt of plan.points) {
		if (pt.minF === undefined && pt.maxF === undefined) continue;
		const test = `C@${biasLabel(pt.biasV)}V`;
		if (already(test)) continue;
		check(test, 'capacitance', capAt(pt.biasV), pt.minF ?? null, pt.maxF ?? null);
	}
	if (plan.ratio) {
		const { lowBiasV, highBiasV } = plan.ratio;
		const a = capAt(lowBiasV);
		const b = capAt(highBiasV);
		const ratio = a !== null && b !== null && b > 0 ? a / b : null;
		check(`ratio C${biasLabel(lowBiasV)}/C${biasLabel(highBiasV)}`, 'ratio', ratio, plan.ratio.min ?? null, plan.ratio.max ?? null);
	}
	if (plan.q) {
		const test = `Q@${biasLabel(plan.q.biasV)}V`;
		if (!already(test)) check(test, 'q', measured(plan.q.biasV)?.q ?? null, plan.q.min, null);
	}
	if (plan.leakage) {
		check(`leakage@${biasLabel(plan.leakage.biasV)}V`, 'leakage', input.leakageA, null, plan.leakage.maxA);
	}
	if (plan.fit) {
		const rms = input.fit?.rmsPct ?? null;
		if (rms === null) failures.push({ test: 'fit rms', category: 'fit', value: null, low: null, high: plan.fit.maxRmsPct });
		else if (rms > plan.fit.maxRmsPct) failures.push({ test: 'fit rms', category: 'fit', value: rms, low: null, high: plan.fit.maxRmsPct });
	}
	if (failures.length === 0) return { pass: true, bin: GOOD_BIN, failures };
	const bins = { ...DEFAULT_BINS, ...(plan.bins ?? {}) };
	const first = BIN_PRIORITY.find((cat) => failures.some((f) => f.category === cat)) ?? 'measurement';
	return { pass: false, bin: bins[first] ?? DEFAULT_BINS[first], failures };
}
