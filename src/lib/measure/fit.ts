/**
 * Junction-capacitance model fit: C(V) = Cj0/(1+V/Vj)^M + Cp (the SPICE depletion-capacitance form
 * at reverse bias V >= 0), by our own Levenberg-Marquardt (lm.ts; see there why not the package).
 *
 * Internals: capacitances in pF for conditioning; parameters ln Cj0, ln Vj, ln M and s with
 * Cp = s^2, which keeps Vj > 0, M > 0, Cp >= 0 without clamping. Residuals are relative,
 * (C_model - C_meas)/C_meas, because the station's error is relative (a frequency error of x ppm
 * is a 2x ppm capacitance error), so the objective is exactly the reported RMS in percent.
 *
 * Point counts: >= 4 distinct biases fit all four parameters; exactly 3 fix Cp = 0 and fit three
 * (our choice: Cp is the least determined parameter); fewer than 3 are refused.
 *
 * A flat C(V) (a part with no voltage dependence) determines only M/Vj: the fit then ends at a
 * tiny M and a huge Vj, finite, with a small RMS. Shapes the model cannot follow end with a large
 * RMS and the poor-fit flag.
 */
import { levenbergMarquardt } from './lm';
import { fail, type Failed, type JunctionParams } from './types';

const PF = 1e-12;

/** RMS residual above which a fit is flagged poor when the plan gives no limit (our choice). */
export const DEFAULT_POOR_FIT_RMS_PCT = 1;

export type JunctionFit = {
	ok: true;
	params: JunctionParams;
	rmsPct: number;
	poorFit: boolean;
	/** LM iterations, summed over the starts tried (usually one) */
	iterations: number;
	/** true when only three points were given and Cp was fixed at 0 */
	cpFixed: boolean;
};

type Start = { lnCj0: number; lnVj: number; lnM: number };

/**
 * Starts from the log-log slope: with Cp ~ 0, ln C = ln Cj0 - M ln(1+V/Vj) is a straight line in
 * ln(1+V/Vj) for the right Vj, so a few Vj values are tried and the straightest line goes first;
 * the same line with Vj refined by golden-section search is the second start.
 */
function logLogStarts(biasV: readonly number[], capPf: readonly number[]): (() => Start | null)[] {
	const ys = capPf.map((c) => Math.log(c));
	const n = ys.length;
	const my = ys.reduce((acc, y) => acc + y, 0) / n;
	const line = (vj: number): { start: Start; sse: number } | null => {
		const xs = biasV.map((v) => Math.log1p(v / vj));
		const mx = xs.reduce((acc, x) => acc + x, 0) / n;
		let sxx = 0;
		let sxy = 0;
		for (let i = 0; i < n; i++) {
			const dx = (xs[i] ?? 0) - mx;
			sxx += dx * dx;
			sxy += dx * ((ys[i] ?? 0) - my);
		}
		if (!(sxx > 0)) return null;
		const m = Math.min(Math.max(-sxy / sxx, 0.05), 5);
		const lnCj0 = my + m * mx;
		let sse = 0;
		for (let i = 0; i < n; i++) {
			const e = (ys[i] ?? 0) - (lnCj0 - m * (xs[i] ?? 0));
			sse += e * e;
		}
		return { start: { lnCj0, lnVj: Math.log(vj), lnM: Math.log(m) }, sse };
	};
	const grid = [0.2, 0.5, 0.8, 1.5, 3, 6, 12];
	const starts: { start: Start; sse: number }[] = [];
	for (const vj of grid) {
		const l = line(vj);
		if (l) starts.push(l);
	}
	starts.sort((x, y) => x.sse - y.sse);
	const best = starts[0];
	if (!best) return [];
	const refine = (): Start | null => {
		// refine Vj of the straightest line by golden-section search in ln Vj between the grid neighbours
		const k = grid.findIndex((v) => Math.log(v) === best.start.lnVj);
		let lo = Math.log(grid[Math.max(k - 1, 0)] ?? 0.2);
		let hi = Math.log(grid[Math.min(k + 1, grid.length - 1)] ?? 12);
		const phi = (Math.sqrt(5) - 1) / 2;
		const sseAt = (lnVj: number) => line(Math.exp(lnVj))?.sse ?? Number.POSITIVE_INFINITY;
		let x1 = hi - phi * (hi - lo);
		let x2 = lo + phi * (hi - lo);
		let f1 = sseAt(x1);
		let f2 = sseAt(x2);
		for (let it = 0; it < 16; it++) {
			if (f1 < f2) {
				hi = x2;
				x2 = x1;
				f2 = f1;
				x1 = hi - phi * (hi - lo);
				f1 = sseAt(x1);
			} else {
				lo = x1;
				x1 = x2;
				f1 = f2;
				x2 = lo + phi * (hi - lo);
				f2 = sseAt(x2);
			}
		}
		return line(Math.exp((lo + hi) / 2))?.start ?? null;
	};
	// the grid line goes first: from it LM usually needs fewer iterations than from the refined
	// one (the straightest log-log line ignores Cp); the refined line, computed only when needed,
	// is the fallback when the first run stalls
	return [() => best.start, refine];
}

/**
 * Fits the junction model to (biasV, capacitanceF) pairs. Assumes reverse biases >= 0 V and
 * positive finite capacitances of ONE part; refuses anything else with a typed error.
 * maxRmsPct sets the poor-fit flag (default DEFAULT_POOR_FIT_RMS_PCT).
 */
export function fitJunction(
	biasV: readonly number[],
	capacitanceF: readonly number[],
	options: { maxRmsPct?: number } = {}
): JunctionFit | Failed {
	if (biasV.length !== capacitanceF.length) return fail('length-mismatch', 'biasV and capacitanceF differ in length');
	if (biasV.length === 0) return fail('empty', 'no points to fit');
	for (let i = 0; i < biasV.length; i++) {
		const v = biasV[i] ?? Number.NaN;
		const c = capacitanceF[i] ?? Number.NaN;
		if (!Number.isFinite(v) || !Number.isFinite(c)) return fail('non-finite', `point ${i} is not finite`);
		if (v < 0) return fail('invalid-input', `point ${i}: reverse bias must be >= 0 V`);
		if (c <= 0) return fail('non-positive', `point ${i}: capacitance must be positive`);
	}
	const distinct = new Set(biasV).size;
	if (distinct !== biasV.length) return fail('duplicate-bias', 'each bias may appear only once');
	if (distinct < 3) return fail('too-few-points', `need at least 3 biases, got ${distinct}`);
	const maxRmsPct = options.maxRmsPct ?? DEFAULT_POOR_FIT_RMS_PCT;
	if (!(maxRmsPct > 0) || !Number.isFinite(maxRmsPct)) return fail('invalid-input', 'maxRmsPct must be positive');

	const cpFixed = distinct === 3;
	const capPf = capacitanceF.map((c) => c / PF);
	const minPf = Math.min(...capPf);
	const n = capPf.length;
	// the Jacobian is always asked for at the last accepted trial, so ln(1+V/Vj) and (1+V/Vj)^-M
	// are kept from it; exp(-M ln(..)) is used because Math.pow costs about twice exp + log1p
	let cacheP: readonly number[] = [];
	const cacheG = new Float64Array(n);
	const cacheLn = new Float64Array(n);
	const residuals = (p: readonly number[]) => {
		const cj0 = Math.exp(p[0] ?? 0);
		const vj = Math.exp(p[1] ?? 0);
		const m = Math.exp(p[2] ?? 0);
		const s = cpFixed ? 0 : (p[3] ?? 0);
		const r = new Array<number>(n);
		for (let i = 0; i < n; i++) {
			const c = capPf[i] ?? 1;
			const ln = Math.log1p((biasV[i] ?? 0) / vj);
			const g = Math.exp(-m * ln);
			cacheG[i] = g;
			cacheLn[i] = ln;
			r[i] = (cj0 * g + s * s - c) / c;
		}
		cacheP = p;
		return r;
	};
	const jacobian = (p: readonly number[]) => {
		const cj0 = Math.exp(p[0] ?? 0);
		const vj = Math.exp(p[1] ?? 0);
		const m = Math.exp(p[2] ?? 0);
		const s = p[3] ?? 0;
		const cached = cacheP === p;
		return capPf.map((c, i) => {
			const v = biasV[i] ?? 0;
			const base = 1 + v / vj;
			const ln = cached ? (cacheLn[i] ?? 0) : Math.log1p(v / vj);
			const g = cached ? (cacheG[i] ?? 0) : Math.exp(-m * ln);
			const dLnCj0 = cj0 * g;
			// d/d ln Vj of (1+V/Vj)^-M = M g (V/Vj)/(1+V/Vj)
			const dLnVj = cj0 * m * g * (v / vj / base);
			const dLnM = -cj0 * g * m * ln;
			const row = [dLnCj0 / c, dLnVj / c, dLnM / c];
			if (!cpFixed) row.push((2 * s) / c);
			return row;
		});
	};
	let best: { params: number[]; sse: number; iterations: number } | null = null;
	let totalIterations = 0;
	// one start usually suffices; the second guards a stalled or poor first run
	for (const makeStart of logLogStarts(biasV, capPf)) {
		const start = makeStart();
		if (start === null) continue;
		const initial = [start.lnCj0, start.lnVj, start.lnM];
		if (!cpFixed) initial.push(Math.sqrt(0.01 * minPf));
		// 1e-8 relative on the sum of squares (1e-6 on the step) moves the parameters far less than the
		// measurement noise does; tighter only costs time
		// initial damping left at the default tau = 1e-3: 1e-2, 1e-4 and 1e-5 all took more iterations on noisy sweeps
		const res = levenbergMarquardt({ residuals, jacobian, initial, maxIterations: 200, relTolerance: 1e-8 });
		if (!res.ok) continue;
		totalIterations += res.iterations;
		if (best === null || res.sumSquares < best.sse) best = { params: res.params, sse: res.sumSquares, iterations: res.iterations };
		// a converged run that is not a poor fit is accepted; otherwise the other start is tried too
		if (res.converged && 100 * Math.sqrt(res.sumSquares / capPf.length) <= maxRmsPct) break;
	}
	if (best === null) return fail('fit-failed', 'the fit did not reach finite parameters');
	const p = best.params;
	const s = cpFixed ? 0 : (p[3] ?? 0);
	const params: JunctionParams = {
		cj0F: Math.exp(p[0] ?? 0) * PF,
		vjV: Math.exp(p[1] ?? 0),
		m: Math.exp(p[2] ?? 0),
		cpF: s * s * PF
	};
	const rmsPct = 100 * Math.sqrt(best.sse / capPf.length);
	if (![params.cj0F, params.vjV, params.m, params.cpF, rmsPct].every(Number.isFinite) || params.vjV <= 0 || params.m <= 0) {
		return fail('fit-failed', 'the fit ended at non-finite or out-of-bounds parameters');
	}
	return { ok: true, params, rmsPct, poorFit: rmsPct > maxRmsPct, iterations: totalIterations, cpFixed };
}

function checkParams(params: JunctionParams): Failed | null {
	const { cj0F, vjV, m, cpF } = params;
	if (![cj0F, vjV, m, cpF].every(Number.isFinite)) return fail('non-finite', 'model parameters must be finite');
	if (cj0F <= 0 || vjV <= 0 || m <= 0 || cpF < 0) return fail('invalid-input', 'need Cj0 > 0, Vj > 0, M > 0, Cp >= 0');
	return null;
}

function checkBias(biasV: number, vjV: number): Failed | null {
	if (!Number.isFinite(biasV)) return fail('non-finite', 'biasV must be finite');
	// the depletion formula is only meaningful while 1 + V/Vj > 0
	if (biasV <= -vjV) return fail('invalid-input', 'biasV must be above -Vj');
	return null;
}

/** Model capacitance at a reverse bias; assumes valid parameters and V > -Vj (checked). */
export function capacitanceAtBiasF(params: JunctionParams, biasV: number): { ok: true; capacitanceF: number } | Failed {
	const bad = checkParams(params) ?? checkBias(biasV, params.vjV);
	if (bad) return bad;
	return { ok: true, capacitanceF: params.cj0F * Math.pow(1 + biasV / params.vjV, -params.m) + params.cpF };
}

/** Capacitance ratio C(Va)/C(Vb) from the model; assumes valid parameters and biases above -Vj. */
export function capacitanceRatio(params: JunctionParams, biasAV: number, biasBV: number): { ok: true; ratio: number } | Failed {
	const a = capacitanceAtBiasF(params, biasAV);
	if (!a.ok) return a;
	const b = capacitanceAtBiasF(params, biasBV);
	if (!b.ok) return b;
	return { ok: true, ratio: a.capacitanceF / b.capacitanceF };
}

/** Tuning sensitivity dC/dV (F/V, negative) from the analytic derivative of the model. */
export function sensitivityFPerV(params: JunctionParams, biasV: number): { ok: true; dCdVFPerV: number } | Failed {
	const bad = checkParams(params) ?? checkBias(biasV, params.vjV);
	if (bad) return bad;
	const { cj0F, vjV, m } = params;
	return { ok: true, dCdVFPerV: (-m * cj0F * Math.pow(1 + biasV / vjV, -m - 1)) / vjV };
}
