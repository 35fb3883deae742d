// Reproducible noise for the demo scenario, tests and benchmarks: mulberry32 (a small
// public-domain 32-bit PRNG) and Box–Muller normal deviates (Box & Muller, Ann. Math. Statist. 29,
// 1958). Pure: the same seed gives the same numbers everywhere.

/** Uniform deviates in [0, 1) from a 32-bit seed. */
export function prng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** One standard normal deviate from two uniforms. */
export function gauss(rand: () => number): number {
	return Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}
