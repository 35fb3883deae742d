import { beforeAll, describe, expect, test } from 'vitest';
import { gauss, prng } from '../../src/lib/prng';
import { baseUrl, cookieOnce } from './helpers';
import { setUpLine, type TestLine } from './line';
import { pF } from './physics';

// The columnar chart answer (`shape=columns`) is the row answer re-shaped: the same header,
// limits, capability, and exactly the same numbers per point and per view entry. The numbers
// themselves are checked against the NIST/SEMATECH e-Handbook in spc.test.ts and src/lib/spc;
// here each view's two answers of one chart are compared with each other.

type Row = Record<string, unknown>;
type RowAnswer = { points: (Row & { seq: number; serial: string; rules: string[] })[]; data: Row } & Row;
type Columns = { seq: number[]; value: number[]; at: number[]; unitId: number[]; limitsVersion: number[]; rules: Record<string, string[]> };
type ColumnAnswer = { points: Columns; data: Row } & Row;

const VIEWS = ['imr', 'xbar-r', 'xbar-s', 'ewma', 'cusum', 'p'] as const;

let engineer = '';
let line: TestLine;
let chartId = 0;
let allPoints: RowAnswer['points'] = [];

async function get(query: string): Promise<{ status: number; type: string | null; body: unknown }> {
	const res = await fetch(`${baseUrl()}/api/v1/charts/${chartId}?${query}`, { headers: { cookie: engineer } });
	return { status: res.status, type: res.headers.get('content-type'), body: await res.json() };
}

/** The columnar points back as records, in the row answer's field order but without serials. */
function pointRows(c: Columns): Row[] {
	return c.seq.map((seq, i) => ({ seq, value: c.value[i], at: new Date(c.at[i] ?? Number.NaN).toISOString(), unitId: c.unitId[i], rules: c.rules[String(seq)] ?? [], limitsVersion: c.limitsVersion[i] }));
}

/** The columnar view data back as records: each record of lists zipped into a list of records. */
function dataRows(data: Row, like: Row): Row {
	const out: Row = {};
	for (const [key, v] of Object.entries(data)) {
		if (!Array.isArray(like[key])) {
			out[key] = v;
			continue;
		}
		const cols = v as Record<string, unknown[]>;
		const n = Math.max(0, ...Object.values(cols).map((c) => c.length));
		out[key] = Array.from({ length: n }, (_, i) => Object.fromEntries(Object.entries(cols).map(([k, c]) => [k, c[i]])));
	}
	return out;
}

async function compare(query: string): Promise<{ rows: RowAnswer; columns: ColumnAnswer }> {
	const [r, c] = await Promise.all([get(query), get(`${query}&shape=columns`)]);
	expect(r.status).toBe(200);
	expect(c.status).toBe(200);
	expect(c.type).toContain('application/json');
	const rows = r.body as RowAnswer;
	const columns = c.body as ColumnAnswer;
	expect(Object.keys(columns)).toEqual(Object.keys(rows));
	for (const key of ['chart', 'limits', 'limitsHistory', 'spec', 'capability', 'capabilityNote']) expect(columns[key], key).toEqual(rows[key]);
	expect(pointRows(columns.points)).toEqual(rows.points.map(({ serial: _serial, ...p }) => p));
	// Sparse rules: only the points that broke a rule are listed.
	for (const ids of Object.values(columns.points.rules)) expect(ids.length).toBeGreaterThan(0);
	expect(Object.keys(columns.points.rules).length).toBe(rows.points.filter((p) => p.rules.length > 0).length);
	expect(dataRows(columns.data, rows.data)).toEqual(rows.data);
	return { rows, columns };
}

beforeAll(async () => {
	engineer = await cookieOnce('engineer');
	line = await setUpLine({
		prefix: 'COL',
		biases: [1, 4],
		plan: {
			points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4, minF: 12 * pF, maxF: 22 * pF }],
			spc: { baselineParts: 10, rules: ['WE1', 'WE4'], subgroupSize: 3, pChartParts: 10 }
		}
	});
	// 48 parts: in-control scatter of 0.2 % (seeded), a few parts 3 % high that break WE1, and
	// two 40 % high, beyond the upper spec limits, so the p chart has failures to count.
	const rand = prng(4711);
	const relative = Array.from({ length: 48 }, (_, i) => ([17, 29, 41].includes(i) ? 0.03 : [23, 36].includes(i) ? 0.4 : 0.002 * gauss(rand)));
	for (let i = 0; i < relative.length; i += 8) await line.post(relative.slice(i, i + 8).map((r) => line.part(r)));
	const list = await fetch(`${baseUrl()}/api/v1/charts?station=${line.stationName}&kind=production`, { headers: { cookie: engineer } });
	const charts = ((await list.json()) as { charts: { id: number; characteristic: string }[] }).charts;
	chartId = charts.find((c) => c.characteristic === 'C@1V')?.id ?? 0;
	expect(chartId).toBeGreaterThan(0);
	allPoints = ((await get('limit=1000')).body as RowAnswer).points;
	expect(allPoints).toHaveLength(48);
});

describe('the columnar chart answer (shape=columns)', () => {
	for (const view of VIEWS) {
		test(`${view}: the same numbers as the row answer`, async () => {
			const { rows, columns } = await compare(`view=${view}&limit=1000`);
			expect(columns.points.seq).toHaveLength(48);
			// Every view computes on this chart (not the error variant).
			expect(rows.data).not.toHaveProperty('error');
			expect(columns.data.view).toBe(view);
		});
	}

	test('the rule breaks come through, keyed by seq', async () => {
		const { columns } = await compare('view=imr&limit=1000');
		const broke = allPoints.filter((p) => p.rules.includes('WE1')).map((p) => String(p.seq));
		expect(broke.length).toBeGreaterThanOrEqual(3);
		for (const seq of broke) expect(columns.points.rules[seq]).toContain('WE1');
	});

	test('the newest points, a seq range and a time range select the same points in both shapes', async () => {
		for (const view of ['imr', 'ewma'] as const) {
			const newest = await compare(`view=${view}&limit=7`);
			expect(newest.columns.points.seq).toEqual(allPoints.slice(-7).map((p) => p.seq));
			const fromSeq = allPoints[5]?.seq ?? 0;
			const range = await compare(`view=${view}&fromSeq=${fromSeq}&limit=12`);
			expect(range.columns.points.seq).toEqual(allPoints.slice(5, 17).map((p) => p.seq));
		}
		const from = String(allPoints[20]?.at);
		const to = String(allPoints[30]?.at);
		const timed = await compare(`view=imr&limit=1000&from=${encodeURIComponent(from)}&to=${encodeURIComponent(to)}`);
		const expected = allPoints.filter((p) => String(p.at) >= from && String(p.at) < to).map((p) => p.seq);
		expect(expected.length).toBeGreaterThan(0);
		expect(timed.columns.points.seq).toEqual(expected);
		const none = await compare('view=imr&limit=1000&from=2000-01-01T00:00:00Z&to=2000-01-02T00:00:00Z');
		expect(none.columns.points.seq).toEqual([]);
	});

	test('the row answer stays the default, and an unknown shape is a 400 problem', async () => {
		const [plain, rows] = await Promise.all([get('view=imr&limit=20'), get('view=imr&limit=20&shape=rows')]);
		expect(rows.body).toEqual(plain.body);
		expect(Array.isArray((plain.body as RowAnswer).points)).toBe(true);
		const bad = await get('view=imr&shape=table');
		expect(bad.status).toBe(400);
		expect(bad.type).toContain('application/problem+json');
		expect((bad.body as { errors: { path: string }[] }).errors.map((e) => e.path)).toEqual(['shape']);
	});
});
