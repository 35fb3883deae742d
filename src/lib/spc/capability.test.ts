import { describe, expect, test } from 'vitest';
import { z } from 'zod';
import { andersonDarlingNormality, andersonDarlingPValue, capability, type CapabilityReport } from './capability';
import { loadReference } from './reference-data.test-helper';
import type { SpcResult } from './types';

function unwrap<T>(r: SpcResult<T>): T {
	if (!r.ok) throw new Error(`${r.error.code}: ${r.error.message}`);
	return r.value;
}

const codes = (r: CapabilityReport) => r.warnings.map((w) => w.code);

const worked = loadReference(
	'worked-examples.json',
	z.object({ examples: z.array(z.object({ id: z.string(), data: z.record(z.string(), z.unknown()).optional() }).passthrough()) })
).examples;
const concentration = z
	.array(z.number())
	.parse(worked.find((e) => e.id === 'montgomery-runger-example-16-2-individuals-concentration')?.data?.concentration_x);
const flowrate = z.array(z.number()).parse(worked.find((e) => e.id === 'nist-ehandbook-6.3.2.2-individuals-flowrate')?.data?.flowrate_x);

// 30 values: the Montgomery & Runger Table 16-3 concentrations followed by the first ten
// NIST 6.3.2.2 flow rates shifted by +49 (so n = 30, df = 29; the data are only a fixture).
const thirty = [...concentration, ...flowrate.map((x) => x + 49)];

/** Independent re-computation of the summaries, written out longhand for the test. */
function summaries(x: readonly number[]) {
	const n = x.length;
	let sum = 0;
	for (const v of x) sum += v;
	const mean = sum / n;
	let ss = 0;
	for (const v of x) ss += (v - mean) * (v - mean);
	let mr = 0;
	for (let i = 1; i < n; i++) mr += Math.abs((x[i] ?? 0) - (x[i - 1] ?? 0));
	return { n, mean, s: Math.sqrt(ss / (n - 1)), mrBar: mr / (n - 1) };
}

describe('capability indices and intervals (independent hand computation with published table values)', () => {
	const lsl = 90;
	const usl = 110;
	const r = unwrap(capability(thirty, { lowerSpecLimit: lsl, upperSpecLimit: usl }, { processInControl: true }));
	const h = summaries(thirty);
	// d2(2) = 1.128 (control-chart-constants.json, 3 decimals): relative tolerance 4e-4 on
	// anything that uses sigma_within.
	const sigmaW = h.mrBar / 1.128;
	const cp = (usl - lsl) / (6 * sigmaW);
	const cpk = Math.min(usl - h.mean, h.mean - lsl) / (3 * sigmaW);
	const pp = (usl - lsl) / (6 * h.s);
	const ppk = Math.min(usl - h.mean, h.mean - lsl) / (3 * h.s);
	const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
	test.each([
		['sigma within = MRbar/d2', r.sigmaWithin, sigmaW, 4e-4],
		['sigma overall = s', r.sigmaOverall, h.s, 1e-12],
		['Cp', r.cp?.value ?? Number.NaN, cp, 4e-4],
		['Cpk', r.cpk.value, cpk, 4e-4],
		['Pp', r.pp?.value ?? Number.NaN, pp, 1e-12],
		['Ppk', r.ppk.value, ppk, 1e-12]
	])('%s', (_label, actual, expected, tol) => {
		expect(rel(actual, expected)).toBeLessThanOrEqual(tol);
	});
	// Chi-square interval for Pp with df = 29: chi2_{0.025,29} = 16.047 (lower tail; NIST/SEMATECH
	// e-Handbook 1.3.6.7.4 table, value recalled from memory) and chi2_{0.975,29} = 45.722
	// (NIST 1.3.6.7.4, the value distributions.test.ts also checks). 3-decimal table values:
	// relative tolerance 1e-4.
	test('Pp 95 % interval = Pp sqrt(chi2/29) with chi2 = 16.047 and 45.722', () => {
		expect(rel(r.pp?.lower ?? Number.NaN, pp * Math.sqrt(16.047 / 29))).toBeLessThanOrEqual(1e-4);
		expect(rel(r.pp?.upper ?? Number.NaN, pp * Math.sqrt(45.722 / 29))).toBeLessThanOrEqual(1e-4);
	});
	// Bissell (1990) as quoted by Rodriguez, J. Quality Technology 24(4), 1992:
	// Cpk [1 +- 1.96 sqrt(1/(9 n Cpk^2) + 1/(2(n-1)))], z = 1.96 from NIST 1.3.6.7.1.
	test('Ppk 95 % interval = Bissell normal approximation', () => {
		const half = 1.96 * Math.sqrt(1 / (9 * 30 * ppk * ppk) + 1 / (2 * 29));
		expect(rel(r.ppk.lower, ppk * (1 - half))).toBeLessThanOrEqual(1e-4);
		expect(rel(r.ppk.upper, ppk * (1 + half))).toBeLessThanOrEqual(1e-4);
	});
	test('Cpk interval uses the same Bissell form with sigma within', () => {
		const c = r.cpk.value;
		const half = 1.96 * Math.sqrt(1 / (9 * 30) + (c * c) / (2 * 29));
		expect(r.cpk.lower).toBeCloseTo(c - half, 3);
		expect(r.cpk.upper).toBeCloseTo(c + half, 3);
	});
	test('30 points: warns that intervals are wide below 100 (common practice), nothing else', () => {
		expect(codes(r)).toEqual(['FEW_POINTS_FOR_TIGHT_INTERVALS']);
	});
});

describe('textbook exercise inputs (USL 100, LSL 90, n = 30, mean 97, s = 1.6)', () => {
	// Exercise text as reproduced at http://www.solutioninn.com/suppose-that-a-quality-characteristic-has-a-normal-distribution-with
	// (textbook not identified); the published answer was not retrieved, so the expected Ppk = min(3, 7)/(3 x 1.6) = 0.625 is a hand computation.
	test('data rescaled to mean 97 and s 1.6 give Ppk = 0.625 and its Bissell interval', () => {
		const h = summaries(thirty);
		const x = thirty.map((v) => 97 + (1.6 * (v - h.mean)) / h.s);
		const r = unwrap(capability(x, { lowerSpecLimit: 90, upperSpecLimit: 100 }, { processInControl: true }));
		expect(r.ppk.value).toBeCloseTo(0.625, 10);
		expect(r.ppu).toBeCloseTo(0.625, 10);
		expect(r.ppl).toBeCloseTo(7 / 4.8, 10);
		const half = 1.96 * Math.sqrt(1 / 270 + 0.625 ** 2 / 58);
		expect(r.ppk.lower).toBeCloseTo(0.625 - half, 3);
	});
});

describe('one-sided specs, boundaries and pooled within sigma', () => {
	test('upper spec only: Cp/Pp undefined, Cpk = Cpu, warning ONE_SIDED_SPEC', () => {
		const r = unwrap(capability(thirty, { upperSpecLimit: 110 }, { processInControl: true }));
		expect(r.cp).toBeNull();
		expect(r.pp).toBeNull();
		expect(r.cpl).toBeNull();
		expect(r.cpk.value).toBe(r.cpu);
		expect(codes(r)).toContain('ONE_SIDED_SPEC');
	});
	test('lower spec only: Cpk = Cpl', () => {
		const r = unwrap(capability(thirty, { lowerSpecLimit: 90 }, { processInControl: true }));
		expect(r.cpk.value).toBe(r.cpl);
		expect(r.cpu).toBeNull();
	});
	test('mean exactly on the USL gives Cpu = Ppu = 0, not NaN', () => {
		const h = summaries(thirty);
		const r = unwrap(capability(thirty, { lowerSpecLimit: h.mean - 10, upperSpecLimit: h.mean }, { processInControl: true }));
		expect(r.cpu).toBeCloseTo(0, 12);
		expect(r.ppk.value).toBeCloseTo(0, 12);
		expect(Number.isFinite(r.ppk.lower)).toBe(true);
	});
	test('pooled subgroup sigma: sqrt of the mean subgroup variance (hand computation)', () => {
		const x = [1, 2, 3, 2, 4, 6, 9, 1, 5, 7];
		const r = unwrap(capability(x, { lowerSpecLimit: -20, upperSpecLimit: 30 }, { processInControl: true, withinSigma: { kind: 'pooled-subgroups', subgroupSize: 3 } }));
		// Subgroups [1,2,3] (var 1), [2,4,6] (var 4), [9,1,5] (var 16); the trailing [7] is
		// incomplete and ignored -> sqrt((1 + 4 + 16)/3) = sqrt(7).
		expect(r.sigmaWithin).toBeCloseTo(Math.sqrt(7), 12);
	});
	test('warnings: too few points, not normality-tested below 8, not in control', () => {
		const r = unwrap(capability([1, 2, 4, 3, 5], { lowerSpecLimit: 0, upperSpecLimit: 10 }, { processInControl: false }));
		expect(codes(r)).toEqual(['FEW_POINTS', 'NORMALITY_NOT_TESTED', 'NOT_IN_CONTROL']);
		expect(r.normality).toBeNull();
	});
	test('clearly non-normal data (exponential quantiles, n = 50) warn NON_NORMAL', () => {
		const x = Array.from({ length: 50 }, (_, i) => -Math.log(1 - (i + 0.5) / 50));
		const r = unwrap(capability(x, { upperSpecLimit: 20 }, { processInControl: true }));
		expect(codes(r)).toContain('NON_NORMAL');
		expect(r.normality?.pValue ?? 1).toBeLessThan(0.05);
	});
	test('100 points or more: no sample-size warning', () => {
		const x = Array.from({ length: 100 }, (_, i) => Math.sin(i * 1.7) + Math.cos(i * 0.3));
		const r = unwrap(capability(x, { lowerSpecLimit: -10, upperSpecLimit: 10 }, { processInControl: true }));
		expect(codes(r).some((c) => c.startsWith('FEW_POINTS'))).toBe(false);
	});
});

describe('bad input to capability gives typed errors', () => {
	const spec = { lowerSpecLimit: 0, upperSpecLimit: 10 };
	test.each([
		['empty', [], spec, 'EMPTY_SERIES'],
		['one point', [5], spec, 'TOO_FEW_POINTS'],
		['NaN', [1, Number.NaN, 3], spec, 'NON_FINITE_VALUE'],
		['+Infinity', [1, Number.POSITIVE_INFINITY], spec, 'NON_FINITE_VALUE'],
		['-Infinity', [Number.NEGATIVE_INFINITY, 1], spec, 'NON_FINITE_VALUE'],
		['constant data', [4, 4, 4, 4], spec, 'ZERO_SIGMA'],
		['no spec limit', [1, 2, 3], {}, 'INVALID_SPEC'],
		['LSL = USL', [1, 2, 3], { lowerSpecLimit: 5, upperSpecLimit: 5 }, 'INVALID_SPEC'],
		['NaN spec', [1, 2, 3], { upperSpecLimit: Number.NaN }, 'INVALID_SPEC'],
		['infinite spec', [1, 2, 3], { lowerSpecLimit: Number.NEGATIVE_INFINITY }, 'INVALID_SPEC']
	])('%s -> %s', (_label, values, s, code) => {
		const r = capability(values, s, { processInControl: true });
		expect(r.ok ? null : r.error.code).toBe(code);
	});
	test.each([[0], [1], [Number.NaN], [1.5]])('confidence level %f -> INVALID_PARAMETER', (level) => {
		const r = capability([1, 2, 3], spec, { processInControl: true, confidenceLevel: level });
		expect(r.ok ? null : r.error.code).toBe('INVALID_PARAMETER');
	});
	test('pooled subgroup size 1 -> INVALID_SUBGROUP_SIZE', () => {
		const r = capability([1, 2, 3], spec, { processInControl: true, withinSigma: { kind: 'pooled-subgroups', subgroupSize: 1 } });
		expect(r.ok ? null : r.error.code).toBe('INVALID_SUBGROUP_SIZE');
	});
});

describe('Anderson-Darling normality test', () => {
	const ref = loadReference(
		'cusum-ad-capability-references.json',
		z.object({ examples: z.array(z.object({ id: z.string() }).passthrough()) })
	).examples.find((e) => e.id === 'anderson-darling-case3-critical-values');
	const table = z
		.object({ published: z.object({ significance_level: z.array(z.number()), critical_value_A_star_squared: z.array(z.number()) }) })
		.parse(ref).published;
	// Stephens in D'Agostino & Stephens (1986), case 3 critical values of A*2 = A2(1 + 0.75/n + 2.25/n^2)
	// (as reproduced at wikilean.com/en/anderson-darling-test): the p-value at each critical
	// value must be its significance level. The Table 4.9 formula is an approximation of the
	// table, so agreement is to 0.0005.
	test.each(table.significance_level.map((alpha, i) => [table.critical_value_A_star_squared[i] ?? Number.NaN, alpha]))(
		'p(A*2 = %f) = %f',
		(critical, alpha) => {
			expect(Math.abs(andersonDarlingPValue(critical) - alpha)).toBeLessThanOrEqual(0.0005);
		}
	);
	// Independent check of A2 from its definition A2 = n * integral_0^1 (F_n(u) - u)^2 / (u(1-u)) du
	// over u = Phi((x - mean)/s), integrated numerically segment by segment (Simpson), rather
	// than the computing formula the code uses.
	function aSquaredByIntegral(u: readonly number[]): number {
		const n = u.length;
		const edges = [0, ...u, 1];
		let total = 0;
		for (let k = 0; k + 1 < edges.length; k++) {
			const a = edges[k] ?? 0;
			const b = edges[k + 1] ?? 1;
			const f = k / n;
			const steps = 4000;
			const hStep = (b - a) / steps;
			const g = (t: number) => ((f - t) ** 2) / (t * (1 - t));
			let s = 0;
			for (let j = 0; j <= steps; j++) {
				const t = a + j * hStep;
				const w = j === 0 || j === steps ? 1 : j % 2 === 1 ? 4 : 2;
				// At u = 0 and u = 1 the outer segments' integrand tends to 0 (F_n = 0 and 1 there).
				s += w * (t <= 0 || t >= 1 ? 0 : g(t));
			}
			total += (s * hStep) / 3;
		}
		return n * total;
	}
	function phi(t: number): number {
		// Normal CDF from the Taylor series of erf, independent of the code under test; accurate
		// to ~1e-12 for the |t| < 4 of these data.
		const x = t / Math.SQRT2;
		let term = x;
		let sum = x;
		for (let k = 1; k < 200; k++) {
			term *= (-x * x) / k;
			sum += term / (2 * k + 1);
		}
		return 0.5 * (1 + (2 / Math.sqrt(Math.PI)) * sum);
	}
	test.each([
		['Montgomery & Runger Table 16-3 concentrations (n = 20)', concentration],
		['NIST 6.3.2.2 flow rates (n = 10)', flowrate],
		['30-point fixture', thirty]
	])('A2 equals the integral definition: %s', (_label, x) => {
		const ad = unwrap(andersonDarlingNormality(x));
		const h = summaries(x);
		const u = [...x].sort((a, b) => a - b).map((v) => phi((v - h.mean) / h.s));
		expect(Math.abs(ad.aSquared - aSquaredByIntegral(u))).toBeLessThan(1e-6);
		expect(ad.aSquaredAdjusted).toBeCloseTo(ad.aSquared * (1 + 0.75 / x.length + 2.25 / x.length ** 2), 12);
	});
	test('normal scores (Blom-type quantiles) are not rejected', () => {
		const x = Array.from({ length: 40 }, (_, i) => {
			// Inverse normal by bisection on phi, to stay independent of the code under test.
			const p = (i + 0.625) / 40.25;
			let lo = -6;
			let hi = 6;
			for (let k = 0; k < 80; k++) {
				const mid = (lo + hi) / 2;
				if (phi(mid) < p) lo = mid;
				else hi = mid;
			}
			return (lo + hi) / 2;
		});
		expect(unwrap(andersonDarlingNormality(x)).pValue).toBeGreaterThan(0.5);
	});
	test('a wild outlier gives a finite statistic and p = 0 rather than NaN', () => {
		const x = [...Array.from({ length: 30 }, (_, i) => (i % 5) * 0.01), 1e6];
		const ad = unwrap(andersonDarlingNormality(x));
		expect(Number.isFinite(ad.aSquared)).toBe(true);
		expect(ad.pValue).toBeLessThan(1e-6);
	});
	test.each([
		['empty', [], 'EMPTY_SERIES'],
		['7 points', [1, 2, 3, 4, 5, 6, 7], 'TOO_FEW_POINTS'],
		['constant', [2, 2, 2, 2, 2, 2, 2, 2], 'ZERO_SIGMA'],
		['NaN', [1, 2, 3, 4, 5, 6, 7, Number.NaN], 'NON_FINITE_VALUE']
	])('%s -> %s', (_label, x, code) => {
		const r = andersonDarlingNormality(x);
		expect(r.ok ? null : r.error.code).toBe(code);
	});
});
