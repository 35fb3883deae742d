import { describe, expect, test } from 'vitest';
import { z } from 'zod';
import { controlChartConstants, type ControlChartConstants } from './constants';
import { loadReference } from './reference-data.test-helper';

// Reference: control chart constants A2, A3, B3, B4, D3, D4, d2, d3, c4 for n = 2..25
// (ASTM MNL7 / Montgomery ISQC Appendix VI lineage, Table A.22 and Joglekar App. G, as
// copied in shared/reference/spc/control-chart-constants.json, copied to
// tests/reference/spc/). Tolerance as its README recommends for constants computed from
// their definitions: 0.0015 absolute for 3-decimal columns, 0.00015 for c4.
const row = z.object({
	n: z.number(),
	A2: z.number(),
	A3: z.number(),
	B3: z.number(),
	B4: z.number(),
	D3: z.number(),
	D4: z.number(),
	d2: z.number(),
	d3: z.number(),
	c4: z.number()
});
const file = loadReference(
	'control-chart-constants.json',
	z.object({
		source: z.string(),
		table: z.array(row),
		computed_check: z.object({ values: z.record(z.string(), row.omit({ n: true })) })
	})
);

const columns = ['A2', 'A3', 'B3', 'B4', 'D3', 'D4', 'd2', 'd3', 'c4'] as const;

function constantsFor(n: number): ControlChartConstants {
	const r = controlChartConstants(n);
	if (!r.ok) throw new Error(r.error.message);
	return r.value;
}

describe('control chart constants against the published table (ASTM / Montgomery Appendix VI)', () => {
	test('table covers n = 2..25', () => {
		expect(file.table.map((r) => r.n)).toEqual(Array.from({ length: 24 }, (_, i) => i + 2));
	});
	const cases = file.table.flatMap((r) => columns.map((c) => [r.n, c, r[c]] as const));
	test.each(cases)('n = %i: %s = %f', (n, column, published) => {
		const tolerance = column === 'c4' ? 0.00015 : 0.0015;
		expect(Math.abs(constantsFor(n)[column] - published)).toBeLessThanOrEqual(tolerance);
	});
});

describe('control chart constants against the file computed_check (quadrature, not a published table)', () => {
	// computed_check is labelled in the file as computed for checking; its values carry 5-6
	// significant digits, so 1e-5 absolute (2e-5 for the 5-decimal A/B/D columns).
	const cases = Object.entries(file.computed_check.values).flatMap(([n, r]) =>
		columns.map((c) => [Number(n), c, r[c]] as const)
	);
	test.each(cases)('n = %i: %s = %f', (n, column, value) => {
		const tolerance = column === 'd2' || column === 'd3' || column === 'c4' ? 1e-5 : 2e-5;
		expect(Math.abs(constantsFor(n)[column] - value)).toBeLessThanOrEqual(tolerance);
	});
});

describe('closed forms', () => {
	// d2(2) = 2/sqrt(pi) and c4(2) = sqrt(2/pi): the range of two standard normals is
	// |X1 - X2| ~ sqrt(2)|Z|, and E|Z| = sqrt(2/pi) (standard result, recalled from memory).
	test('d2(2) = 2/sqrt(pi)', () => expect(constantsFor(2).d2).toBeCloseTo(2 / Math.sqrt(Math.PI), 9));
	test('c4(2) = sqrt(2/pi)', () => expect(constantsFor(2).c4).toBeCloseTo(Math.sqrt(2 / Math.PI), 12));
	// Var|Z| = 1 - 2/pi, so d3(2) = sqrt(2 (1 - 2/pi)) (recalled from memory).
	test('d3(2) = sqrt(2(1 - 2/pi))', () => expect(constantsFor(2).d3).toBeCloseTo(Math.sqrt(2 * (1 - 2 / Math.PI)), 7));
});

describe('invalid subgroup sizes are typed errors', () => {
	test.each([1, 0, -3, 26, 2.5, Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY])('n = %f', (n) => {
		const r = controlChartConstants(n);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('INVALID_SUBGROUP_SIZE');
	});
});
