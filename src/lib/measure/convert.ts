/**
 * Conversion between the tank's resonance and the capacitance of one part.
 *
 * Tank: fixture inductor L in parallel with the stray capacitance and the part branch; the branch is
 * the part arrangement in series with an optional DC-blocking capacitor Cb (null = none).
 *   C_tank = 1/((2 pi f)^2 L),  C_eff = C_tank - C_stray,  C_branch = C_eff Cb/(Cb - C_eff),
 *   single: C_part = C_branch; parallel2: C_part = C_branch/2; antiseries2: C_part = 2 C_branch.
 */
import { fail, type Arrangement, type Failed } from './types';

const TWO_PI = 2 * Math.PI;

export type TankSetup = {
	arrangement: Arrangement;
	inductanceH: number;
	strayF: number;
	/** series DC-blocking capacitor, null when there is none */
	blockingF: number | null;
};

function checkSetup(setup: TankSetup): Failed | null {
	if (setup.arrangement !== 'single' && setup.arrangement !== 'parallel2' && setup.arrangement !== 'antiseries2') {
		return fail('invalid-input', `unknown arrangement ${String(setup.arrangement)}`);
	}
	if (!Number.isFinite(setup.inductanceH)) return fail('non-finite', 'inductanceH must be finite');
	if (setup.inductanceH <= 0) return fail('non-positive', 'inductanceH must be positive');
	if (!Number.isFinite(setup.strayF)) return fail('non-finite', 'strayF must be finite');
	if (setup.strayF < 0) return fail('non-positive', 'strayF must not be negative');
	if (setup.blockingF !== null) {
		if (!Number.isFinite(setup.blockingF)) return fail('non-finite', 'blockingF must be finite or null');
		if (setup.blockingF <= 0) return fail('non-positive', 'blockingF must be positive or null');
	}
	return null;
}

/** Branch capacitance seen by the signal per part capacitance; assumes identical parts. */
function branchPerPart(arrangement: Arrangement): number {
	if (arrangement === 'parallel2') return 2;
	if (arrangement === 'antiseries2') return 0.5;
	return 1;
}

/** Series loss resistance of the branch per part ESR (parallel halves it, series doubles it). */
function branchResistancePerPart(arrangement: Arrangement): number {
	if (arrangement === 'parallel2') return 0.5;
	if (arrangement === 'antiseries2') return 2;
	return 1;
}

/** Tank capacitance of an ideal LC resonance; assumes finite positive f and L (checked). */
export function tankCapacitanceF(
	resonanceHz: number,
	inductanceH: number
): { ok: true; tankF: number } | Failed {
	if (!Number.isFinite(resonanceHz) || !Number.isFinite(inductanceH)) {
		return fail('non-finite', 'resonanceHz and inductanceH must be finite');
	}
	if (resonanceHz <= 0 || inductanceH <= 0) return fail('non-positive', 'resonanceHz and inductanceH must be positive');
	const w = TWO_PI * resonanceHz;
	return { ok: true, tankF: 1 / (w * w * inductanceH) };
}

export type PartCapacitance = {
	ok: true;
	capacitanceF: number;
	tankF: number;
	/** branch capacitance as the tank sees it (in series with the blocking capacitor) */
	branchEffF: number;
	/** capacitance of the part arrangement alone */
	branchF: number;
};

/**
 * Capacitance of ONE part from the tank's resonance. Assumes an ideal lossless LC resonance
 * (losses shift f by ~1/(8Q^2), negligible at the Q of a test tank) and identical parts in the
 * two-part arrangements. Refuses readings that no physical part could give.
 */
export function partCapacitanceFromResonance(input: TankSetup & { resonanceHz: number }): PartCapacitance | Failed {
	const bad = checkSetup(input);
	if (bad) return bad;
	const tank = tankCapacitanceF(input.resonanceHz, input.inductanceH);
	if (!tank.ok) return tank;
	const branchEffF = tank.tankF - input.strayF;
	if (!(branchEffF > 0)) {
		return fail(
			'non-positive-after-stray',
			`tank capacitance ${tank.tankF.toExponential(4)} F is not above the stray ${input.strayF.toExponential(4)} F`
		);
	}
	let branchF = branchEffF;
	if (input.blockingF !== null) {
		// a series capacitor caps the effective capacitance below Cb, so C_eff >= Cb is impossible
		if (!(branchEffF < input.blockingF)) {
			return fail(
				'branch-not-below-blocking',
				`effective branch capacitance ${branchEffF.toExponential(4)} F is not below the blocking capacitor ${input.blockingF.toExponential(4)} F`
			);
		}
		branchF = (branchEffF * input.blockingF) / (input.blockingF - branchEffF);
	}
	if (!Number.isFinite(branchF)) return fail('non-finite', 'branch capacitance is not finite');
	return {
		ok: true,
		capacitanceF: branchF / branchPerPart(input.arrangement),
		tankF: tank.tankF,
		branchEffF,
		branchF
	};
}

/** Forward direction: resonance of the tank holding parts of the given capacitance (ideal LC). */
export function resonanceFromPartCapacitance(
	input: TankSetup & { capacitanceF: number }
): { ok: true; resonanceHz: number; tankF: number } | Failed {
	const bad = checkSetup(input);
	if (bad) return bad;
	if (!Number.isFinite(input.capacitanceF)) return fail('non-finite', 'capacitanceF must be finite');
	if (input.capacitanceF <= 0) return fail('non-positive', 'capacitanceF must be positive');
	const branchF = input.capacitanceF * branchPerPart(input.arrangement);
	const branchEffF = input.blockingF === null ? branchF : (branchF * input.blockingF) / (branchF + input.blockingF);
	const tankF = input.strayF + branchEffF;
	return { ok: true, resonanceHz: 1 / (TWO_PI * Math.sqrt(input.inductanceH * tankF)), tankF };
}

/** Quality factor from the -3 dB (half-power) bandwidth, Q = f/BW; assumes a single resonance. */
export function qualityFactor(resonanceHz: number, bandwidthHz: number): { ok: true; q: number } | Failed {
	if (!Number.isFinite(resonanceHz) || !Number.isFinite(bandwidthHz)) {
		return fail('non-finite', 'resonanceHz and bandwidthHz must be finite');
	}
	if (resonanceHz <= 0 || bandwidthHz <= 0) return fail('non-positive', 'resonanceHz and bandwidthHz must be positive');
	return { ok: true, q: resonanceHz / bandwidthHz };
}

/**
 * Equivalent series resistance of ONE part from the tank Q.
 * Loss model: ALL tank loss is attributed to the parts' series resistance; the inductor, the
 * stray and the blocking capacitor are taken as lossless. A series R in the branch of effective
 * capacitance C_eff appears across the tank as a conductance w^2 C_eff^2 R (high-Q series-to-
 * parallel conversion, error ~1/Q^2), and the tank's Q is w C_tank / G, hence
 *   R_branch = C_tank / (w Q C_eff^2),
 * which for a single part with no stray reduces to the familiar 1/(w C Q). The branch resistance is
 * then split per arrangement (parallel2: 2 R_branch per part; antiseries2: R_branch/2 per part).
 */
export function partEsrOhm(input: TankSetup & { resonanceHz: number; q: number }): { ok: true; esrOhm: number } | Failed {
	if (!Number.isFinite(input.q)) return fail('non-finite', 'q must be finite');
	if (input.q <= 0) return fail('non-positive', 'q must be positive');
	const part = partCapacitanceFromResonance(input);
	if (!part.ok) return part;
	const w = TWO_PI * input.resonanceHz;
	const branchOhm = part.tankF / (w * input.q * part.branchEffF * part.branchEffF);
	return { ok: true, esrOhm: branchOhm / branchResistancePerPart(input.arrangement) };
}
