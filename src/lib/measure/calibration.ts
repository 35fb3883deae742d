/**
 * Fixture calibration from reference capacitors placed alone in the socket (in series with the
 * blocking capacitor where there is one, whatever the arrangement used for parts):
 *   y = 1/(2 pi f)^2 = L C_stray + L C_ref,eff
 * is a straight line in C_ref,eff; ordinary least squares gives L = slope and
 * C_stray = intercept/slope.
 *
 * Residual (our definition): the RMS over the references of the relative frequency residuals
 * (f_measured - f_line)/f_line, in ppm, where f_line = 1/(2 pi sqrt(L (C_stray + C_ref,eff))).
 * With exactly two references the line passes through both points and the residual is 0 by
 * construction, so two references cannot reveal a bad reference; three or more are advised.
 */
import { fail, type Failed } from './types';

export type CalibrationLimits = {
	maxResidualPpm: number;
	maxInductanceChangePct: number;
	maxStrayChangeF: number;
};

/** Defaults: our choice / common practice for a test-fixture check, not from a standard. */
export const DEFAULT_CALIBRATION_LIMITS: CalibrationLimits = {
	maxResidualPpm: 200,
	maxInductanceChangePct: 1,
	maxStrayChangeF: 2e-12
};

/** Default validity of a calibration, hours (our choice / common practice: one shift). */
export const DEFAULT_VALIDITY_HOURS = 8;

export type Calibration = {
	inductanceH: number;
	strayF: number;
	residualPpm: number;
	referenceCount: number;
	blockingF: number | null;
	/** ms since the Unix epoch */
	at: number;
	validUntil: number;
};

export type CalibrationInput = {
	references: { capacitanceF: number; resonanceHz: number }[];
	blockingF: number | null;
	/** time of the calibration, ms since the Unix epoch (passed in: the domain has no clock) */
	at: number;
	/** undefined = DEFAULT_VALIDITY_HOURS */
	validityHours?: number | undefined;
	/** per-station limits; a missing or undefined field takes the default */
	limits?: Partial<Record<keyof CalibrationLimits, number | undefined>>;
	previous?: { inductanceH: number; strayF: number } | null;
};

export type CalibrationRefusal = Failed & {
	/** the computed values, when the refusal is a limit (so the operator can see them) */
	candidate?: Omit<Calibration, 'validUntil'>;
};

/**
 * Calibrates L and the stray from two or more references. Assumes each reference's value is
 * known exactly and the tank is an ideal LC; refuses non-physical or out-of-limit results.
 */
export function calibrateFixture(input: CalibrationInput): { ok: true; calibration: Calibration } | CalibrationRefusal {
	// a limit given as undefined means "use the default", not "no limit"
	const given = input.limits ?? {};
	const limits: CalibrationLimits = {
		maxResidualPpm: given.maxResidualPpm ?? DEFAULT_CALIBRATION_LIMITS.maxResidualPpm,
		maxInductanceChangePct: given.maxInductanceChangePct ?? DEFAULT_CALIBRATION_LIMITS.maxInductanceChangePct,
		maxStrayChangeF: given.maxStrayChangeF ?? DEFAULT_CALIBRATION_LIMITS.maxStrayChangeF
	};
	const validityHours = input.validityHours ?? DEFAULT_VALIDITY_HOURS;
	if (!Number.isFinite(input.at)) return fail('non-finite', 'at must be a finite time');
	if (!Number.isFinite(validityHours) || validityHours <= 0) return fail('non-positive', 'validityHours must be positive');
	for (const [k, v] of Object.entries(limits)) {
		if (!Number.isFinite(v) || v < 0) return fail('invalid-input', `limit ${k} must be finite and >= 0`);
	}
	const cb = input.blockingF;
	if (cb !== null && !(Number.isFinite(cb) && cb > 0)) return fail('invalid-input', 'blockingF must be positive or null');
	const refs = input.references;
	if (!Array.isArray(refs) || refs.length === 0) return fail('empty', 'no reference readings');
	if (refs.length < 2) return fail('too-few-points', 'need at least two reference capacitors');
	const xs: number[] = [];
	const ys: number[] = [];
	for (const [i, ref] of refs.entries()) {
		if (!Number.isFinite(ref.capacitanceF) || !Number.isFinite(ref.resonanceHz)) {
			return fail('non-finite', `references.${i}: values must be finite`);
		}
		if (ref.capacitanceF <= 0 || ref.resonanceHz <= 0) return fail('non-positive', `references.${i}: values must be positive`);
		xs.push(cb === null ? ref.capacitanceF : (ref.capacitanceF * cb) / (ref.capacitanceF + cb));
		const w = 2 * Math.PI * ref.resonanceHz;
		ys.push(1 / (w * w));
	}
	// centre and scale for conditioning: x in pF, y relative to its mean
	const n = xs.length;
	const mx = xs.reduce((a, b) => a + b, 0) / n;
	const my = ys.reduce((a, b) => a + b, 0) / n;
	let sxx = 0;
	let sxy = 0;
	for (let i = 0; i < n; i++) {
		const dx = (xs[i] ?? 0) - mx;
		sxx += dx * dx;
		sxy += dx * ((ys[i] ?? 0) - my);
	}
	if (!(sxx > 0) || sxx < 1e-12 * mx * mx * n) return fail('degenerate', 'reference capacitances must differ');
	const slope = sxy / sxx;
	const intercept = my - slope * mx;
	if (!(slope > 0) || !Number.isFinite(slope)) return fail('degenerate', 'calibration line has no positive slope');
	const inductanceH = slope;
	const strayF = intercept / slope;
	let sumRel2 = 0;
	for (let i = 0; i < n; i++) {
		const fLine = 1 / (2 * Math.PI * Math.sqrt(inductanceH * (strayF + (xs[i] ?? 0))));
		const fMeas = refs[i]?.resonanceHz ?? Number.NaN;
		sumRel2 += ((fMeas - fLine) / fLine) ** 2;
	}
	const residualPpm = 1e6 * Math.sqrt(sumRel2 / n);
	const candidate = { inductanceH, strayF, residualPpm, referenceCount: n, blockingF: cb, at: input.at };
	if (!Number.isFinite(residualPpm)) return fail('degenerate', 'calibration residual is not finite');
	const refuse = (code: Failed['error']['code'], message: string): CalibrationRefusal => ({ ...fail(code, message), candidate });
	if (strayF < 0) return refuse('calibration-negative-stray', `stray ${strayF.toExponential(3)} F is negative`);
	if (residualPpm > limits.maxResidualPpm) {
		return refuse('calibration-residual', `residual ${residualPpm.toFixed(1)} ppm exceeds ${limits.maxResidualPpm} ppm`);
	}
	const prev = input.previous;
	if (prev) {
		if (!(Number.isFinite(prev.inductanceH) && prev.inductanceH > 0 && Number.isFinite(prev.strayF))) {
			return fail('invalid-input', 'previous calibration is not usable');
		}
		const dLPct = (100 * Math.abs(inductanceH - prev.inductanceH)) / prev.inductanceH;
		if (dLPct > limits.maxInductanceChangePct) {
			return refuse('calibration-inductance-change', `inductance moved ${dLPct.toFixed(3)} % (limit ${limits.maxInductanceChangePct} %)`);
		}
		const dStray = Math.abs(strayF - prev.strayF);
		if (dStray > limits.maxStrayChangeF) {
			return refuse('calibration-stray-change', `stray moved ${(dStray * 1e12).toFixed(3)} pF (limit ${limits.maxStrayChangeF * 1e12} pF)`);
		}
	}
	return { ok: true, calibration: { ...candidate, validUntil: input.at + validityHours * 3_600_000 } };
}

/** True when `now` (ms since epoch) lies in [at, validUntil); assumes both from the same clock. */
export function calibrationInForce(cal: Pick<Calibration, 'at' | 'validUntil'>, now: number): boolean {
	return Number.isFinite(now) && now >= cal.at && now < cal.validUntil;
}
