/**
 * Seeded pseudo-random numbers for the simulator, so a run with the same seed replays exactly.
 * mulberry32 (a 32-bit state generator by Tommy Ettinger, public domain) gives uniforms; the
 * Box–Muller transform (Box & Muller, Ann. Math. Statist. 29(2), 1958, 610–611) turns pairs of
 * uniforms into standard normal deviates.
 */

export interface Rng {
	/** Uniform deviate in [0, 1). */
	next(): number;
	/** Standard normal deviate (mean 0, sd 1). */
	normal(): number;
	/** Integer uniformly drawn from lowInclusive..highInclusive; assumes lowInclusive <= highInclusive. */
	int(lowInclusive: number, highInclusive: number): number;
	/** A new, independent generator seeded from this one (for per-station or per-lot streams). */
	fork(label: string): Rng;
}

/** 32-bit FNV-1a hash of a string; assumes nothing, any string (including empty) is hashed. */
export function hashString(text: string): number {
	let hash = 0x811c9dc5;
	for (let i = 0; i < text.length; i += 1) {
		hash ^= text.charCodeAt(i);
		hash = Math.imul(hash, 0x01000193) >>> 0;
	}
	return hash >>> 0;
}

/** mulberry32 generator; assumes `seed` is any number, which is reduced to an unsigned 32-bit state. */
export function mulberry32(seed: number): () => number {
	let state = (Number.isFinite(seed) ? Math.trunc(seed) : 0) >>> 0;
	return () => {
		state = (state + 0x6d2b79f5) >>> 0;
		let t = state;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** A seeded generator with uniform, normal and integer draws; assumes `seed` is a number or a string label. */
export function createRng(seed: number | string): Rng {
	const seedNumber = typeof seed === 'string' ? hashString(seed) : seed;
	const uniform = mulberry32(seedNumber);
	// Box–Muller yields two deviates per pair of uniforms; the second is kept for the next call.
	let spare: number | null = null;
	const rng: Rng = {
		next: uniform,
		normal() {
			if (spare !== null) {
				const value = spare;
				spare = null;
				return value;
			}
			// 1 - u lies in (0, 1], so the logarithm is finite.
			const u1 = 1 - uniform();
			const u2 = uniform();
			const radius = Math.sqrt(-2 * Math.log(u1));
			spare = radius * Math.sin(2 * Math.PI * u2);
			return radius * Math.cos(2 * Math.PI * u2);
		},
		int(lowInclusive, highInclusive) {
			const span = Math.floor(highInclusive) - Math.ceil(lowInclusive) + 1;
			if (!(span > 0)) return Math.ceil(lowInclusive);
			return Math.ceil(lowInclusive) + Math.floor(uniform() * span);
		},
		fork(label) {
			// Mixing a fresh draw with the label keeps forks of one parent distinct and repeatable.
			return createRng((hashString(label) ^ Math.floor(uniform() * 4294967296)) >>> 0);
		}
	};
	return rng;
}
