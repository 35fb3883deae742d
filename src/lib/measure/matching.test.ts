// The reference for the set count is an exhaustive search written here (every way of packing
// disjoint matched sets, by recursion over subsets), independent of the greedy under test. The
// definition of a matched set is the one documented in matching.ts.
import { describe, expect, it } from 'vitest';
import { formMatchedSets, isMatchedSet } from './matching';
import { prng } from '../../../tests/support/prng';


/** Definition check written out independently of isMatchedSet. */
function satisfiesDefinition(vectors: number[][], tolPct: number): boolean {
	const width = vectors[0]?.length ?? 0;
	for (let j = 0; j < width; j++) {
		const col = vectors.map((v) => v[j] ?? Number.NaN);
		const mean = col.reduce((a, b) => a + b, 0) / col.length;
		if (col.some((c) => Math.abs(c - mean) > (tolPct / 100) * mean)) return false;
	}
	return true;
}

/** Maximum number of disjoint matched k-sets, exhaustively (n <= ~12). */
function optimum(v: number[][], k: number, tolPct: number): number {
	const n = v.length;
	const memo = new Map<number, number>();
	const rec = (mask: number): number => {
		const hit = memo.get(mask);
		if (hit !== undefined) return hit;
		let first = -1;
		for (let i = 0; i < n; i++) if (!(mask & (1 << i))) { first = i; break; }
		if (first < 0) return 0;
		let best = rec(mask | (1 << first));
		const rest: number[] = [];
		for (let i = first + 1; i < n; i++) if (!(mask & (1 << i))) rest.push(i);
		const choose = (start: number, picked: number[]) => {
			if (picked.length === k - 1) {
				const set = [first, ...picked];
				if (satisfiesDefinition(set.map((i) => v[i] ?? []), tolPct)) {
					let m = mask;
					for (const i of set) m |= 1 << i;
					best = Math.max(best, 1 + rec(m));
				}
				return;
			}
			for (let j = start; j < rest.length; j++) choose(j + 1, [...picked, rest[j] ?? 0]);
		};
		choose(0, []);
		memo.set(mask, best);
		return best;
	};
	return rec(0);
}

function lot(seed: number) {
	const rand = prng(seed);
	const points = 1 + (seed % 3);
	const k = 2 + (seed % 2);
	const n = 6 + (seed % 5);
	const tolPct = 1 + 2 * rand();
	const v = Array.from({ length: n }, () => {
		const base = 100e-12 * (1 + 0.06 * (rand() - 0.5));
		return Array.from({ length: points }, (_, j) => (base * (1 + 0.03 * (rand() - 0.5))) / (j + 1));
	});
	return { points, k, tolPct, v };
}

const SEEDS = Array.from({ length: 600 }, (_, i) => i + 1);

describe('formMatchedSets', () => {
	it('on 600 seeded lots: every set matched, disjoint, size k; never more than the optimum', () => {
		for (const seed of SEEDS) {
			const { k, tolPct, v } = lot(seed);
			const r = formMatchedSets(v.map((c, i) => ({ id: `p${i}`, capacitanceF: c })), k, tolPct);
			expect(r.ok).toBe(true);
			if (!r.ok) return;
			const all = r.sets.flat();
			expect(new Set(all).size).toBe(all.length);
			expect(all.length + r.unmatched.length).toBe(v.length);
			for (const set of r.sets) {
				expect(set).toHaveLength(k);
				expect(satisfiesDefinition(set.map((id) => v[Number(id.slice(1))] ?? []), tolPct)).toBe(true);
			}
			expect(r.sets.length).toBeLessThanOrEqual(optimum(v, k, tolPct));
		}
	});

	it('one plan point, k = 2: equals the exhaustive optimum (documented guarantee)', () => {
		let checked = 0;
		for (const seed of SEEDS) {
			const { points, k, tolPct, v } = lot(seed);
			if (points !== 1 || k !== 2) continue;
			checked++;
			const r = formMatchedSets(v.map((c, i) => ({ id: `p${i}`, capacitanceF: c })), k, tolPct);
			expect(r.ok && r.sets.length).toBe(optimum(v, k, tolPct));
		}
		expect(checked).toBe(100);
	});

	it('all lots: optimum in >= 580 of 600 and never more than one set short (documented outcome)', () => {
		let optimal = 0;
		for (const seed of SEEDS) {
			const { k, tolPct, v } = lot(seed);
			const r = formMatchedSets(v.map((c, i) => ({ id: `p${i}`, capacitanceF: c })), k, tolPct);
			if (!r.ok) throw new Error('unexpected refusal');
			const opt = optimum(v, k, tolPct);
			expect(opt - r.sets.length).toBeLessThanOrEqual(1);
			if (opt === r.sets.length) optimal++;
		}
		expect(optimal).toBeGreaterThanOrEqual(580);
	});

	it('empty lot gives no sets', () => {
		expect(formMatchedSets([], 2, 1)).toEqual({ ok: true, sets: [], unmatched: [] });
	});
	it('one part stays unmatched', () => {
		expect(formMatchedSets([{ id: 'a', capacitanceF: [1e-12] }], 2, 1)).toEqual({ ok: true, sets: [], unmatched: ['a'] });
	});
	it('a pair exactly on the tolerance is matched (inclusive): 99 and 101 around 100 at 1 %', () => {
		// mean exactly 100 and (1/100)*100 rounds to exactly 1, so both deviations sit on the limit
		expect(isMatchedSet([[99], [101]], 1)).toBe(true);
		expect(isMatchedSet([[98.9], [101.1]], 1)).toBe(false);
	});
	it.each([
		['set size 1', [{ id: 'a', capacitanceF: [1] }], 1, 1, 'invalid-input'],
		['tolerance NaN', [{ id: 'a', capacitanceF: [1] }], 2, Number.NaN, 'invalid-input'],
		['no values', [{ id: 'a', capacitanceF: [] }], 2, 1, 'empty'],
		['mismatched lengths', [{ id: 'a', capacitanceF: [1, 2] }, { id: 'b', capacitanceF: [1] }], 2, 1, 'length-mismatch'],
		['NaN value', [{ id: 'a', capacitanceF: [Number.NaN] }], 2, 1, 'non-finite'],
		['+Inf value', [{ id: 'a', capacitanceF: [Number.POSITIVE_INFINITY] }], 2, 1, 'non-finite'],
		['negative value', [{ id: 'a', capacitanceF: [-1] }], 2, 1, 'non-positive'],
		['duplicate id', [{ id: 'a', capacitanceF: [1] }, { id: 'a', capacitanceF: [1] }], 2, 1, 'invalid-input']
	])('refuses %s', (_n, parts, k, tol, code) => {
		const r = formMatchedSets(parts, k, tol);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
	});
});
