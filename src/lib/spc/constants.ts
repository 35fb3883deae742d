/**
 * Control-chart constants computed from their definitions rather than copied from a
 * table, so that D3/D4 are not affected by the rounded inputs some printed tables used
 * (e.g. D4 at n = 3 is 2.5746, printed 2.574).
 *
 * - c4 = sqrt(2/(n-1)) * Gamma(n/2) / Gamma((n-1)/2), with the Gamma ratio obtained by
 *   the exact recursion Gamma(x+1) = x Gamma(x) (no approximation of Gamma needed).
 * - d2 = E[range of n standard normals] = integral of 1 - Phi(x)^n - (1-Phi(x))^n dx.
 * - d3 = SD of that range, from E[W^2] = double integral of (y-x)^2 times the joint
 *   density of (min, max), n(n-1) phi(x) phi(y) [Phi(y)-Phi(x)]^(n-2), for x < y.
 * Integration is the trapezoid rule on a uniform grid over [-9, 9]; for smooth integrands
 * that decay like the normal density this converges far below the 1e-6 needed here.
 */
import { normalCdf } from '../stats/distributions';
import type { SpcResult } from './types';

export const MIN_SUBGROUP_SIZE = 2;
export const MAX_SUBGROUP_SIZE = 25;

export interface ControlChartConstants {
	readonly n: number;
	readonly A2: number;
	readonly A3: number;
	readonly B3: number;
	readonly B4: number;
	readonly D3: number;
	readonly D4: number;
	readonly d2: number;
	readonly d3: number;
	readonly c4: number;
}

const GRID_STEP = 0.05;
const GRID_HALF_WIDTH = 9;

interface NormalGrid {
	readonly x: readonly number[];
	readonly pdf: readonly number[];
	readonly cdf: readonly number[];
}

let gridCache: NormalGrid | null = null;

function normalGrid(): NormalGrid {
	if (gridCache) return gridCache;
	const x: number[] = [];
	const pdf: number[] = [];
	const cdf: number[] = [];
	const count = Math.round((2 * GRID_HALF_WIDTH) / GRID_STEP);
	for (let i = 0; i <= count; i++) {
		const xi = -GRID_HALF_WIDTH + i * GRID_STEP;
		x.push(xi);
		pdf.push(Math.exp(-0.5 * xi * xi) / Math.sqrt(2 * Math.PI));
		cdf.push(normalCdf(xi));
	}
	gridCache = { x, pdf, cdf };
	return gridCache;
}

function at(values: readonly number[], i: number): number {
	return values[i] ?? 0;
}

function rangeMoments(n: number): { d2: number; d3: number } {
	const g = normalGrid();
	const m = g.x.length;
	let mean = 0;
	for (let i = 0; i < m; i++) {
		const p = at(g.cdf, i);
		mean += 1 - p ** n - (1 - p) ** n;
	}
	mean *= GRID_STEP;
	let second = 0;
	for (let i = 0; i < m; i++) {
		const fi = at(g.pdf, i);
		const pi = at(g.cdf, i);
		const xi = at(g.x, i);
		for (let j = i + 1; j < m; j++) {
			const w = at(g.x, j) - xi;
			second += w * w * fi * at(g.pdf, j) * (at(g.cdf, j) - pi) ** (n - 2);
		}
	}
	// The diagonal x = y contributes zero, so summing j > i is the full trapezoid sum.
	second *= n * (n - 1) * GRID_STEP * GRID_STEP;
	return { d2: mean, d3: Math.sqrt(second - mean * mean) };
}

function c4Of(n: number): number {
	// r(k) = Gamma(k/2) / Gamma((k-1)/2); r(2) = 1/sqrt(pi); r(k+1) = ((k-1)/2) / r(k).
	let r = 1 / Math.sqrt(Math.PI);
	for (let k = 2; k < n; k++) r = (k - 1) / 2 / r;
	return Math.sqrt(2 / (n - 1)) * r;
}

const cache = new Map<number, ControlChartConstants>();

/**
 * Constants for subgroup size n. Assumes n is an integer in 2..25 (the range the
 * published tables cover); anything else is a typed INVALID_SUBGROUP_SIZE error.
 */
export function controlChartConstants(n: number): SpcResult<ControlChartConstants> {
	if (!Number.isInteger(n) || n < MIN_SUBGROUP_SIZE || n > MAX_SUBGROUP_SIZE) {
		return {
			ok: false,
			error: {
				code: 'INVALID_SUBGROUP_SIZE',
				message: `subgroup size must be an integer from ${MIN_SUBGROUP_SIZE} to ${MAX_SUBGROUP_SIZE}, got ${String(n)}`
			}
		};
	}
	const hit = cache.get(n);
	if (hit) return { ok: true, value: hit };
	const { d2, d3 } = rangeMoments(n);
	const c4 = c4Of(n);
	const sRatio = (3 * Math.sqrt(1 - c4 * c4)) / c4;
	const value: ControlChartConstants = {
		n,
		A2: 3 / (d2 * Math.sqrt(n)),
		A3: 3 / (c4 * Math.sqrt(n)),
		B3: Math.max(0, 1 - sRatio),
		B4: 1 + sRatio,
		D3: Math.max(0, 1 - (3 * d3) / d2),
		D4: 1 + (3 * d3) / d2,
		d2,
		d3,
		c4
	};
	cache.set(n, value);
	return { ok: true, value };
}
