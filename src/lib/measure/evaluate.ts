/**
 * One entry point for a tested unit: resonances -> capacitance of one part per point -> Q and
 * ESR where a bandwidth was given -> junction fit -> judgement and bin.
 *
 * Our choices: malformed input (unknown arrangement, bad calibration or plan, no points,
 * non-finite or duplicate biases, malformed leakage/temperature) is a typed error, because no bin
 * can be trusted. A physically impossible reading (non-finite or non-positive resonance or
 * bandwidth, tank below the stray, branch not below the blocking capacitor) is NOT an error: the
 * point's capacitance is null, a `measurement` failure names it, and the unit gets bin 7 (or the
 * plan's measurement bin), so the station always gets a bin. The fit uses the usable points only.
 * temperatureC is checked but no temperature correction is applied.
 */
import { partCapacitanceFromResonance, partEsrOhm, qualityFactor } from './convert';
import { fitJunction } from './fit';
import { biasLabel, judgeUnit, validateSpecPlan } from './spec';
import { ARRANGEMENTS, fail, type Arrangement, type Failed, type SpecFailure, type SpecPlan } from './types';

export type UnitPoint = { biasV: number; resonanceHz: number; bandwidthHz?: number };

export type EvaluateInput = {
	arrangement: Arrangement;
	blockingF: number | null;
	calibration: { inductanceH: number; strayF: number };
	plan: SpecPlan;
	unit: { points: UnitPoint[]; leakageA?: number; temperatureC?: number };
};

export type EvaluateResult = {
	ok: true;
	bin: number;
	pass: boolean;
	/** one part, per measured point in input order; null where the reading was impossible */
	capacitanceF: (number | null)[];
	/** per point when any bandwidth was given, else null */
	q: (number | null)[] | null;
	esrOhm: (number | null)[] | null;
	fit: { cj0F: number; vjV: number; m: number; cpF: number; rmsPct: number } | null;
	failures: SpecFailure[];
};

/** Evaluates one unit; assumes the calibration is in force (the caller checks its validity). */
export function evaluateUnit(input: EvaluateInput): EvaluateResult | Failed {
	if (!ARRANGEMENTS.includes(input.arrangement)) return fail('invalid-input', `unknown arrangement ${String(input.arrangement)}`);
	const cb = input.blockingF;
	if (cb !== null && !(Number.isFinite(cb) && cb > 0)) return fail('invalid-input', 'blockingF must be positive or null');
	const { inductanceH, strayF } = input.calibration;
	if (!(Number.isFinite(inductanceH) && inductanceH > 0)) return fail('invalid-input', 'calibration.inductanceH must be positive');
	if (!(Number.isFinite(strayF) && strayF >= 0)) return fail('invalid-input', 'calibration.strayF must be >= 0');
	const planCheck = validateSpecPlan(input.plan);
	if (!planCheck.ok) {
		return fail('invalid-plan', planCheck.errors.map((e) => `${e.path}: ${e.message}`).join('; '));
	}
	const pts = input.unit.points;
	if (!Array.isArray(pts) || pts.length === 0) return fail('empty', 'unit has no points');
	const seen = new Set<number>();
	for (const [i, p] of pts.entries()) {
		if (!Number.isFinite(p.biasV) || p.biasV < 0) return fail('invalid-input', `unit.points.${i}.biasV must be a finite reverse bias >= 0`);
		if (seen.has(p.biasV)) return fail('duplicate-bias', `unit.points.${i}.biasV is repeated`);
		seen.add(p.biasV);
	}
	const leakageA = input.unit.leakageA;
	if (leakageA !== undefined && !(Number.isFinite(leakageA) && leakageA >= 0)) return fail('invalid-input', 'unit.leakageA must be finite and >= 0');
	const t = input.unit.temperatureC;
	if (t !== undefined && !Number.isFinite(t)) return fail('invalid-input', 'unit.temperatureC must be finite');

	const setup = { arrangement: input.arrangement, inductanceH, strayF, blockingF: cb };
	const prior: SpecFailure[] = [];
	const capacitanceF: (number | null)[] = [];
	const anyBandwidth = pts.some((p) => p.bandwidthHz !== undefined);
	const q: (number | null)[] = [];
	const esrOhm: (number | null)[] = [];
	for (const p of pts) {
		const c = partCapacitanceFromResonance({ ...setup, resonanceHz: p.resonanceHz });
		if (c.ok) capacitanceF.push(c.capacitanceF);
		else {
			capacitanceF.push(null);
			prior.push({ test: `C@${biasLabel(p.biasV)}V`, category: 'measurement', value: null, low: null, high: null });
		}
		if (p.bandwidthHz === undefined) {
			q.push(null);
			esrOhm.push(null);
			continue;
		}
		const qf = qualityFactor(p.resonanceHz, p.bandwidthHz);
		if (!qf.ok) {
			q.push(null);
			esrOhm.push(null);
			prior.push({ test: `Q@${biasLabel(p.biasV)}V`, category: 'measurement', value: null, low: null, high: null });
			continue;
		}
		q.push(qf.q);
		const esr = c.ok ? partEsrOhm({ ...setup, resonanceHz: p.resonanceHz, q: qf.q }) : null;
		esrOhm.push(esr && esr.ok ? esr.esrOhm : null);
	}
	const judged = judgeCapacitances({
		plan: input.plan,
		points: pts.map((p, i) => ({ biasV: p.biasV, capacitanceF: capacitanceF[i] ?? null, q: q[i] ?? null })),
		leakageA: leakageA ?? null,
		priorFailures: prior
	});
	const { judgement, fit } = judged;
	return {
		ok: true,
		bin: judgement.bin,
		pass: judgement.pass,
		capacitanceF,
		q: anyBandwidth ? q : null,
		esrOhm: anyBandwidth ? esrOhm : null,
		fit,
		failures: judgement.failures
	};
}

export type CapacitancePoint = { biasV: number; capacitanceF: number | null; q: number | null };

export type CapacitanceJudgement = {
	judgement: { bin: number; pass: boolean; failures: SpecFailure[] };
	fit: { cj0F: number; vjV: number; m: number; cpF: number; rmsPct: number } | null;
};

/**
 * Fits and judges one part whose capacitances are already known (a bench meter's readings, or
 * capacitances converted from resonances): the junction fit over the usable points (3 or more),
 * then the plan's judgement. Assumes a plan accepted by validateSpecPlan and distinct, finite
 * biases; a null capacitance is an unusable reading and must come with a prior failure.
 */
export function judgeCapacitances(input: { plan: SpecPlan; points: CapacitancePoint[]; leakageA: number | null; priorFailures?: SpecFailure[] }): CapacitanceJudgement {
	const usable = input.points.flatMap((p) => (p.capacitanceF === null ? [] : [{ biasV: p.biasV, c: p.capacitanceF }]));
	const maxRmsPct = input.plan.fit?.maxRmsPct;
	const fitRes =
		usable.length >= 3
			? fitJunction(
					usable.map((u) => u.biasV),
					usable.map((u) => u.c),
					maxRmsPct === undefined ? {} : { maxRmsPct }
				)
			: null;
	const fit = fitRes && fitRes.ok ? { ...fitRes.params, rmsPct: fitRes.rmsPct } : null;
	const judgement = judgeUnit({
		plan: input.plan,
		points: input.points,
		fit: fitRes && fitRes.ok ? { params: fitRes.params, rmsPct: fitRes.rmsPct } : null,
		leakageA: input.leakageA,
		priorFailures: input.priorFailures ?? []
	});
	return { judgement, fit };
}
