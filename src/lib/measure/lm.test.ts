// Reference: NIST Statistical Reference Datasets, Nonlinear Regression, certified values
// (https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml), one page per dataset:
//   Misra1a  https://www.itl.nist.gov/div898/strd/nls/data/misra1a.shtml  (lower difficulty)
//   Chwirut2 https://www.itl.nist.gov/div898/strd/nls/data/chwirut2.shtml (lower difficulty)
//   Thurber, MGH09, Eckerle4, BoxBOD, Rat43 (higher difficulty), same site.
// data: tests/reference/measure/<name>.json (copied from shared/reference/nist-strd)
//
// Documented outcome of our LM (lm.ts), asserted below: both starts of every dataset reach the
// certified parameters and residual sum of squares to >= 6 significant digits, EXCEPT BoxBOD from
// start 1 (b1 = 1, b2 = 1), where it stalls far from the certified minimum.
// ml-levenberg-marquardt 5.1.0 with its defaults does not reach 6 digits on Misra1a or Chwirut2
// from either start (it stops after <= 100 iterations near the start); with tuned options it gets
// there but only by running to its iteration cap: it has no convergence test. That is why the fit
// uses our own LM.
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { levenbergMarquardt as packageLm } from 'ml-levenberg-marquardt';
import { describe, expect, it } from 'vitest';
import { levenbergMarquardt } from './lm';

type Nist = {
	name: string;
	observations: [number, number][];
	starting_values: Record<'start1' | 'start2', Record<string, number>>;
	certified_values: Record<string, number>;
	residual_sum_of_squares: number;
	source_url: string;
};

const load = (name: string): Nist =>
	JSON.parse(readFileSync(resolve(__dirname, '../../../tests/reference/measure', `${name}.json`), 'utf8')) as Nist;

const b = (p: readonly number[], i: number) => p[i] ?? Number.NaN;
const MODELS: Record<string, (p: readonly number[], x: number) => number> = {
	Misra1a: (p, x) => b(p, 0) * (1 - Math.exp(-b(p, 1) * x)),
	Chwirut2: (p, x) => Math.exp(-b(p, 0) * x) / (b(p, 1) + b(p, 2) * x),
	Thurber: (p, x) =>
		(b(p, 0) + b(p, 1) * x + b(p, 2) * x ** 2 + b(p, 3) * x ** 3) / (1 + b(p, 4) * x + b(p, 5) * x ** 2 + b(p, 6) * x ** 3),
	MGH09: (p, x) => (b(p, 0) * (x ** 2 + x * b(p, 1))) / (x ** 2 + x * b(p, 2) + b(p, 3)),
	Eckerle4: (p, x) => (b(p, 0) / b(p, 1)) * Math.exp(-0.5 * ((x - b(p, 2)) / b(p, 1)) ** 2),
	BoxBOD: (p, x) => b(p, 0) * (1 - Math.exp(-b(p, 1) * x)),
	Rat43: (p, x) => b(p, 0) / (1 + Math.exp(b(p, 1) - b(p, 2) * x)) ** (1 / b(p, 3))
};

function digits(got: number, want: number): number {
	if (got === want) return 16;
	return -Math.log10(Math.abs(got - want) / Math.abs(want));
}

function solve(name: string, start: 'start1' | 'start2') {
	const d = load(name);
	const f = MODELS[name];
	if (!f) throw new Error(`no model for ${name}`);
	const res = levenbergMarquardt({
		residuals: (p) => d.observations.map(([x, y]) => f(p, x) - y),
		initial: Object.values(d.starting_values[start]),
		maxIterations: 5000
	});
	const cert = Object.values(d.certified_values);
	if (!res.ok) return { paramDigits: -Infinity, rssDigits: -Infinity };
	const paramDigits = Math.min(...res.params.map((v, i) => digits(v, cert[i] ?? Number.NaN)));
	return { paramDigits, rssDigits: digits(res.sumSquares, d.residual_sum_of_squares) };
}

const SOLVED: [string, 'start1' | 'start2'][] = [
	['Misra1a', 'start1'],
	['Misra1a', 'start2'],
	['Chwirut2', 'start1'],
	['Chwirut2', 'start2'],
	['Thurber', 'start1'],
	['Thurber', 'start2'],
	['MGH09', 'start1'],
	['MGH09', 'start2'],
	['Eckerle4', 'start1'],
	['Eckerle4', 'start2'],
	['BoxBOD', 'start2'],
	['Rat43', 'start1'],
	['Rat43', 'start2']
];

describe('our Levenberg-Marquardt against NIST StRD certified values', () => {
	it.each(SOLVED)('%s from %s: parameters and RSS to >= 6 significant digits', (name, start) => {
		const r = solve(name, start);
		expect(r.paramDigits).toBeGreaterThanOrEqual(6);
		expect(r.rssDigits).toBeGreaterThanOrEqual(6);
	});

	it('BoxBOD from start1 is NOT solved (documented limitation)', () => {
		const r = solve('BoxBOD', 'start1');
		expect(r.rssDigits).toBeLessThan(1);
	});

	it('refuses a non-finite start', () => {
		const r = levenbergMarquardt({ residuals: (p) => [b(p, 0) - 1], initial: [Number.NaN] });
		expect(r.ok).toBe(false);
	});

	it('an exact linear problem ends at zero residual (y = 2x + 1 through three points)', () => {
		const xs = [0, 1, 2];
		const r = levenbergMarquardt({ residuals: (p) => xs.map((x) => b(p, 0) * x + b(p, 1) - (2 * x + 1)), initial: [0, 0] });
		expect(r.ok).toBe(true);
		if (r.ok) {
			expect(r.params[0]).toBeCloseTo(2, 10);
			expect(r.params[1]).toBeCloseTo(1, 10);
		}
	});
});

describe('ml-levenberg-marquardt 5.1.0 on the same data (why it is not used)', () => {
	const pkg = (name: string, start: 'start1' | 'start2', options: Record<string, number | boolean>) => {
		const d = load(name);
		const f = MODELS[name];
		if (!f) throw new Error(`no model for ${name}`);
		const r = packageLm(
			{ x: d.observations.map((o) => o[0]), y: d.observations.map((o) => o[1]) },
			(p: number[]) => (x: number) => f(p, x),
			{ initialValues: Object.values(d.starting_values[start]), ...options }
		);
		const cert = Object.values(d.certified_values);
		return {
			paramDigits: Math.min(...r.parameterValues.map((v, i) => digits(v, cert[i] ?? Number.NaN))),
			rssDigits: digits(r.parameterError, d.residual_sum_of_squares),
			iterations: r.iterations
		};
	};
	it.each([
		['Misra1a', 'start1'],
		['Misra1a', 'start2'],
		['Chwirut2', 'start1'],
		['Chwirut2', 'start2']
	] as const)('defaults: %s from %s stays below 6 digits', (name, start) => {
		expect(pkg(name, start, {}).paramDigits).toBeLessThan(6);
	});
	it.each([
		['Misra1a', 'start1'],
		['Chwirut2', 'start2']
	] as const)('tuned: %s from %s reaches 6 digits only by running to the iteration cap', (name, start) => {
		const r = pkg(name, start, {
			damping: 1e-3,
			maxIterations: 10000,
			errorTolerance: 1e-12,
			gradientDifference: 1e-6,
			centralDifference: true
		});
		expect(r.paramDigits).toBeGreaterThanOrEqual(6);
		expect(r.iterations).toBe(10000);
	});
});
