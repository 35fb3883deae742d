import { describe, expect, it } from 'vitest';
import { createRng, hashString, mulberry32 } from './rng';

describe('seeded PRNG', () => {
	it.each([[1], [42], [0xdeadbeef], ['T-01|parts']])('seed %s replays the same sequence', (seed) => {
		const a = createRng(seed);
		const b = createRng(seed);
		for (let i = 0; i < 1000; i += 1) {
			expect(a.next()).toBe(b.next());
			expect(a.normal()).toBe(b.normal());
		}
	});

	it('different seeds give different sequences', () => {
		const a = createRng(1);
		const b = createRng(2);
		const same = Array.from({ length: 100 }, () => a.next() === b.next()).filter(Boolean).length;
		expect(same).toBeLessThan(2);
	});

	it.each([[Number.NaN], [Number.POSITIVE_INFINITY], [-1], [2 ** 40 + 3]])('odd seed %s still yields uniforms in [0, 1)', (seed) => {
		const u = mulberry32(seed);
		for (let i = 0; i < 1000; i += 1) {
			const x = u();
			expect(x).toBeGreaterThanOrEqual(0);
			expect(x).toBeLessThan(1);
		}
	});

	it('FNV-1a 32-bit hash matches the published test vectors', () => {
		// FNV-1a 32-bit test vectors of IETF draft-eastlake-fnv-14 (as also used by Boost.Hash2's tests):
		// "" -> 0x811c9dc5, "a" -> 0xe40c292c, "foobar" -> 0xbf9cf968.
		expect(hashString('')).toBe(0x811c9dc5);
		expect(hashString('a')).toBe(0xe40c292c);
		expect(hashString('foobar')).toBe(0xbf9cf968);
	});

	const n = 100_000;
	it('uniform deviates over 10^5 draws: mean ≈ 1/2, variance ≈ 1/12 (uniform distribution on [0, 1))', () => {
		const rng = createRng(20260301);
		let sum = 0;
		let sumSq = 0;
		for (let i = 0; i < n; i += 1) {
			const x = rng.next();
			sum += x;
			sumSq += x * x;
		}
		const mean = sum / n;
		const variance = sumSq / n - mean * mean;
		// 5 standard errors: sd of the mean is √(1/12)/√n ≈ 0.00091.
		expect(Math.abs(mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / n));
		expect(Math.abs(variance - 1 / 12)).toBeLessThan(0.002);
	});

	it('Box–Muller normal deviates over 10^5 draws: mean ≈ 0, sd ≈ 1, ~68.27 % within ±1 sd (Box & Muller 1958; standard normal table)', () => {
		// Box, G. E. P. and Muller, M. E., "A Note on the Generation of Random Normal Deviates",
		// Ann. Math. Statist. 29(2), 610–611, 1958. P(|Z| < 1) = 2Φ(1) − 1 = 0.6827 with Φ(1) = 0.84134 from
		// the standard normal table (NIST/SEMATECH e-Handbook 1.3.6.7.1; section number recalled from memory).
		const rng = createRng(7);
		let sum = 0;
		let sumSq = 0;
		let within1 = 0;
		let sum4 = 0;
		let nonFinite = 0;
		for (let i = 0; i < n; i += 1) {
			const z = rng.normal();
			if (!Number.isFinite(z)) nonFinite += 1;
			sum += z;
			sumSq += z * z;
			sum4 += z ** 4;
			if (Math.abs(z) < 1) within1 += 1;
		}
		expect(nonFinite).toBe(0);
		const mean = sum / n;
		const sd = Math.sqrt(sumSq / n - mean * mean);
		// Standard error of the mean is 1/√n ≈ 0.0032; of the sd about 1/√(2n) ≈ 0.0022.
		expect(Math.abs(mean)).toBeLessThan(5 / Math.sqrt(n));
		expect(Math.abs(sd - 1)).toBeLessThan(5 / Math.sqrt(2 * n));
		expect(Math.abs(within1 / n - 0.6827)).toBeLessThan(0.0075);
		// The normal's fourth moment is 3 (kurtosis of the normal distribution).
		expect(Math.abs(sum4 / n - 3)).toBeLessThan(0.1);
	});

	it('int() stays within its bounds and reaches both ends', () => {
		const rng = createRng(5);
		const seen = new Set<number>();
		for (let i = 0; i < 2000; i += 1) {
			const k = rng.int(1, 10);
			expect(k).toBeGreaterThanOrEqual(1);
			expect(k).toBeLessThanOrEqual(10);
			seen.add(k);
		}
		expect(seen.size).toBe(10);
		expect(rng.int(3, 3)).toBe(3);
		expect(rng.int(5, 2)).toBe(5);
	});

	it('forks are repeatable and distinct from each other', () => {
		const a = createRng(9).fork('x');
		const b = createRng(9).fork('x');
		const c = createRng(9).fork('y');
		const first = a.next();
		expect(b.next()).toBe(first);
		expect(c.next()).not.toBe(first);
	});
});
