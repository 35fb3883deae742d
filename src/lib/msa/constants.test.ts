import { describe, expect, test } from 'vitest';
import { d2Factor, d3Factor, d4Factor, k1Factor, kFromD2Star } from './constants';
import { loadControlChartConstants } from './testing/reference-fixtures';

// Reference: control chart constants, ASTM MNL7 / Montgomery ISQC Appendix VI (Table A.22 for
// n = 2..21, Joglekar 2003 App. G / ASTM for n = 22..25), as copied in
// shared/reference/spc/control-chart-constants.json (subset copied to
// tests/reference/msa/control-chart-constants-subset.json).
const constants = loadControlChartConstants();

describe('D4, d2, d3 against the ASTM / Montgomery table', () => {
	test.each(constants.table.map((r) => [r.n, r] as const))('n = %i', (n, row) => {
		expect(d4Factor(n)).toBe(row.D4);
		// The module keeps 6 decimals; published 3-decimal tables differ from the exact values by
		// up to 0.001 (known_discrepancies in the file), hence the file's suggested 0.0015.
		expect(Math.abs((d2Factor(n) ?? Number.NaN) - row.d2)).toBeLessThanOrEqual(0.0015);
		expect(Math.abs((d3Factor(n) ?? Number.NaN) - row.d3)).toBeLessThanOrEqual(0.0015);
	});
	// Not published: the file's computed_check (numerical integration of the range distribution).
	test.each(Object.entries(constants.computed_check.values))('n = %s: 6-decimal d2, d3 equal computed_check', (n, v) => {
		expect(d2Factor(Number(n))).toBe(v.d2);
		expect(d3Factor(Number(n))).toBe(v.d3);
	});
	test.each([1, 26, 2.5, 0, -3, Number.NaN])('n = %f is outside the table -> null', (n) => {
		expect(d4Factor(n)).toBeNull();
		expect(d2Factor(n)).toBeNull();
		expect(k1Factor(n)).toBeNull();
		expect(kFromD2Star(n)).toBeNull();
	});
});

// Reference: AIAG MSA Reference Manual, 4th ed. (2010), average-and-range report-form constants
// (1-sigma form). Values recalled from memory; K1 = 0.5908 (3 trials), K2 = 0.5231
// (3 appraisers) and K3 = 0.3146 (10 parts) are also stated, with d2* = sqrt(d2^2 + d3^2), in
// shared/reference/msa/gauge-rr-examples.json, example 3, method.constants.
describe('AIAG K1 / K2 / K3 from d2 and d2* (4 decimals)', () => {
	test.each([
		[2, 0.8862],
		[3, 0.5908]
	])('K1 for %i trials = %f', (trials, k1) => {
		expect(k1Factor(trials)).toBe(k1);
	});
	test.each([
		[2, 0.7071],
		[3, 0.5231]
	])('K2 for %i appraisers = %f', (m, k2) => {
		expect(kFromD2Star(m)).toBe(k2);
	});
	test.each([
		[2, 0.7071],
		[3, 0.5231],
		[4, 0.4467],
		[5, 0.403],
		[6, 0.3742],
		[7, 0.3534],
		[8, 0.3375],
		[9, 0.3249],
		[10, 0.3146]
	])('K3 for %i parts = %f', (m, k3) => {
		expect(kFromD2Star(m)).toBe(k3);
	});
	// d2*(2, g = 1) is exactly sqrt(2): the range of two standard normals is |X1 - X2| with
	// E[W^2] = Var(X1 - X2) = 2 (elementary identity), so K = 1/sqrt(2) = 0.70711.
	test('K for 2 levels is 1/sqrt(2) to 4 decimals', () => {
		expect(kFromD2Star(2)).toBe(Math.round(1e4 / Math.SQRT2) / 1e4);
	});
});
