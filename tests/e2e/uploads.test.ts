// Bench uploads over HTTP: who may upload, bad files store nothing, a good file imports once,
// counts toward the lot's bins and feeds no control chart. Capacitances come from the test
// junction of physics.ts (SPICE depletion form), judged against windows of ±5 % around it.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce } from './helpers';
import { jsonInit, setUpLine, type TestLine } from './line';
import { abruptPartF, pF } from './physics';

const BIASES = [1, 2, 4, 8];
const plan = { points: BIASES.map((v) => ({ biasV: v, minF: abruptPartF(v) * 0.95, maxF: abruptPartF(v) * 1.05 })), spc: { baselineParts: 10 } };
let line: TestLine;

/** A bench file: `n` parts, the k-th part scaled by `scale(k)`. */
function benchCsv(prefix: string, n: number, scale: (k: number) => number = () => 1): string {
	const rows = ['serial,biasV,capacitanceF,leakageA'];
	for (let k = 0; k < n; k++) BIASES.forEach((v, i) => rows.push(`${prefix}-${k},${v},${(abruptPartF(v) * scale(k)).toExponential(6)},${i === 0 ? '1e-9' : ''}`));
	return rows.join('\n') + '\n';
}

async function stage(who: 'engineer' | 'operator' | 'admin' | null, lot: string, fileName: string, text: string, type = 'text/csv') {
	const headers: Record<string, string> = { 'content-type': type };
	if (who) headers.cookie = await cookieOnce(who);
	return fetch(`${baseUrl()}/api/v1/uploads?${new URLSearchParams({ lot, fileName })}`, { method: 'POST', headers, body: text });
}
async function importLines(id: number) {
	const res = await fetch(`${baseUrl()}/api/v1/uploads/${id}/import`, { method: 'POST', headers: { cookie: await cookieOnce('engineer') } });
	return { status: res.status, lines: res.status === 200 ? (await res.text()).trim().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>) : [], res };
}
async function lotTested(lot: string): Promise<{ tested: number; bins: Record<string, number> }> {
	const res = await fetch(`${baseUrl()}/api/v1/lots/${lot}`, { headers: { cookie: await cookieOnce('engineer') } });
	return (await res.json()) as { tested: number; bins: Record<string, number> };
}
async function chartPoints(): Promise<number> {
	const res = await fetch(`${baseUrl()}/api/v1/charts?product=${line.code}`, { headers: { cookie: await cookieOnce('engineer') } });
	const charts = ((await res.json()) as { charts: { pointCount: number }[] }).charts;
	return charts.reduce((a, c) => a + c.pointCount, 0);
}

beforeAll(async () => {
	line = await setUpLine({ prefix: 'UPH', plan, biases: BIASES });
	await line.post([line.part(), line.part(0.01), line.part(-0.01)]);
});
afterAll(() => undefined);

describe('bench uploads over HTTP', () => {
	test('only engineers and admins upload; operators get 403 and anonymous callers 401', async () => {
		expect((await stage('operator', line.lotNumber, 'a.csv', benchCsv('OP', 1))).status).toBe(403);
		expect((await stage(null, line.lotNumber, 'a.csv', benchCsv('AN', 1))).status).toBe(401);
		const page = await fetch(`${baseUrl()}/uploads`, { headers: { cookie: await cookieOnce('operator') }, redirect: 'manual' });
		expect(page.status).toBe(403);
		expect((await fetch(`${baseUrl()}/api/v1/uploads`, { headers: { cookie: await cookieOnce('operator') } })).status).toBe(403);
	});

	test('bad input is refused with the line of each bad row and changes nothing', async () => {
		const before = await lotTested(line.lotNumber);
		const good = benchCsv('BAD', 3).split('\n');
		good[5] = 'BAD-1,2,12.5,'; // pF written where farads belong
		good[9] = 'BAD-2,4,abc,';
		const res = await stage('engineer', line.lotNumber, 'bad.csv', good.join('\n'));
		expect(res.status).toBe(400);
		expect(res.headers.get('content-type')).toContain('application/problem+json');
		const body = (await res.json()) as { detail: string; errors: { line: number; column: string; message: string }[]; preview: unknown[] };
		expect(body.errors.map((e) => [e.line, e.column])).toEqual([
			[6, 'capacitanceF'],
			[10, 'capacitanceF']
		]);
		expect(body.detail).toContain('nothing was imported');
		expect(body.preview.length).toBe(12);
		for (const [type, status] of [['application/json', 415]] as const) expect((await stage('engineer', line.lotNumber, 'x.csv', benchCsv('T', 1), type)).status).toBe(status);
		expect((await stage('engineer', 'LT-NO-SUCH-LOT', 'x.csv', benchCsv('T', 1))).status).toBe(404);
		expect((await stage('engineer', line.lotNumber, 'a/b.csv', benchCsv('T', 1))).status).toBe(400);
		expect((await stage('engineer', line.lotNumber, 'big.csv', 'serial,biasV,capacitanceF\n' + 'X,1,1e-12\n'.repeat(230_000))).status).toBe(413);
		expect(await lotTested(line.lotNumber)).toEqual(before);
	});

	test('a good file imports once: bins counted in the lot, bench parts stored, no chart point added', async () => {
		const before = await lotTested(line.lotNumber);
		const points = await chartPoints();
		expect(points).toBeGreaterThan(0);
		// 5 parts: part 3 is 10 % high, outside the ±5 % windows (capacitance bin 2).
		const text = benchCsv('GOOD', 5, (k) => (k === 3 ? 1.1 : 1));
		const staged = await stage('engineer', line.lotNumber, 'good bench.csv', text);
		expect(staged.status).toBe(201);
		const s = (await staged.json()) as { upload: { id: number; parts: number; rows: number; status: string }; bins: { bin: number; count: number }[] };
		expect(s.upload).toMatchObject({ parts: 5, rows: 20, status: 'staged' });
		expect(s.bins).toEqual([{ bin: 1, count: 4 }, { bin: 2, count: 1 }]);
		expect(await lotTested(line.lotNumber)).toEqual(before); // staging stores no part

		const run = await importLines(s.upload.id);
		expect(run.status).toBe(200);
		expect(run.res.headers.get('content-type')).toContain('application/x-ndjson');
		expect(run.lines.at(-1)).toMatchObject({ type: 'done', imported: 5, lot: line.lotNumber });
		expect(run.lines.filter((l) => l.type === 'progress').at(-1)).toMatchObject({ done: 5, total: 5 });

		const after = await lotTested(line.lotNumber);
		expect(after.tested).toBe(before.tested + 5);
		expect((after.bins['1'] ?? 0) - (before.bins['1'] ?? 0)).toBe(4);
		expect((after.bins['2'] ?? 0) - (before.bins['2'] ?? 0)).toBe(1);
		expect(await chartPoints()).toBe(points);

		const units = await fetch(`${baseUrl()}/api/v1/lots/${line.lotNumber}/units?limit=20`, { headers: { cookie: await cookieOnce('engineer') } });
		const list = ((await units.json()) as { units: { id?: number; serial: string; kind: string }[] }).units.filter((u) => u.serial.startsWith('GOOD-'));
		expect(list.map((u) => u.kind)).toEqual(['bench', 'bench', 'bench', 'bench', 'bench']);

		// Again: the same upload, and the same file staged anew, are both refused.
		expect((await importLines(s.upload.id)).status).toBe(409);
		const again = await stage('engineer', line.lotNumber, 'renamed.csv', text);
		expect(again.status).toBe(409);
		expect(((await again.json()) as { detail: string }).detail).toContain('already imported');
		expect((await lotTested(line.lotNumber)).tested).toBe(before.tested + 5);
		const state = await fetch(`${baseUrl()}/api/v1/uploads/${s.upload.id}`, { headers: { cookie: await cookieOnce('engineer') } });
		expect(((await state.json()) as { upload: { status: string } }).upload.status).toBe('imported');
		// The import is audited once: who, file name, lot and count.
		const trail = await fetch(`${baseUrl()}/api/v1/audit?entity=upload&limit=500`, { headers: { cookie: await cookieOnce('engineer') } });
		const entries = ((await trail.json()) as { entries: { entityId: string; actor: string; action: string; after: { fileName: string; lot: string; parts: number } }[] }).entries;
		const mine = entries.filter((e) => e.entityId === String(s.upload.id));
		expect(mine.map((e) => [e.action, e.actor, e.after.fileName, e.after.lot, e.after.parts])).toEqual([['import', 'noor.haddad@corvane.example', 'good bench.csv', line.lotNumber, 5]]);
	});

	test('a bench part reads back in SI with its fit and no calibration', async () => {
		const text = benchCsv('ONE', 1);
		const s = (await (await stage('engineer', line.lotNumber, 'one.csv', text)).json()) as { upload: { id: number } };
		expect((await importLines(s.upload.id)).lines.at(-1)).toMatchObject({ type: 'done', imported: 1 });
		const units = await fetch(`${baseUrl()}/api/v1/units?serial=ONE-0`, { headers: { cookie: await cookieOnce('engineer') } });
		const found = ((await units.json()) as { units: { id: number; serial: string; lot: string }[] }).units.find((u) => u.lot === line.lotNumber);
		expect(found?.id).toBeGreaterThan(0);
		const res = await fetch(`${baseUrl()}/api/v1/units/${found?.id}`, { headers: { cookie: await cookieOnce('operator') } });
		expect(res.status).toBe(200);
		const part = ((await res.json()) as { part: { kind: string; source: string; calibration: unknown; station: unknown; pass: boolean; sweep: { biasV: number; capacitanceF: number }[]; fit: { cj0F: number } | null; leakageA: number } }).part;
		expect(part).toMatchObject({ kind: 'bench', source: 'upload:one.csv', calibration: null, station: null, pass: true, leakageA: 1e-9 });
		part.sweep.forEach((p, i) => expect(p.capacitanceF).toBeCloseTo(abruptPartF(BIASES[i] ?? 0), 17));
		// The fitted curve's Cj0 against the junction's 40 pF (plus its 0.3 pF Cp at 0 V, fitted separately).
		expect(part.fit?.cj0F ?? 0).toBeGreaterThan(30 * pF);
		expect((await fetch(`${baseUrl()}/api/v1/units/999999999`, { headers: { cookie: await cookieOnce('operator') } })).status).toBe(404);
	});

	test('a closed lot takes no upload', async () => {
		const operator = await cookieOnce('operator');
		const other = await setUpLine({ prefix: 'UPC', plan, biases: BIASES });
		expect((await fetch(`${baseUrl()}/api/v1/lots/${other.lotNumber}`, jsonInit(operator, 'PATCH', { status: 'closed' }))).status).toBe(200);
		const res = await stage('engineer', other.lotNumber, 'c.csv', benchCsv('CL', 1));
		expect(res.status).toBe(409);
		expect(((await res.json()) as { detail: string }).detail).toContain('closed');
	});
});
