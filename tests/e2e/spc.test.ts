import { randomUUID } from 'node:crypto';
import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieFor } from './helpers';
import { abruptPartF, pF, referenceReadings, resonanceHz, type TestFixture } from './physics';

// Control charts inside the post. Rules as labelled in tests/reference/spc/rules.md:
// WE1 (Western Electric 1956, rule 1): one point beyond 3 sigma; WE4: eight successive points
// on one side of the centre line. The baseline is 10 parts with a hand-made spread; the
// individuals chart's sigma is MR̄/d2 (NIST/SEMATECH e-Handbook 6.3.2.2; d2 = 1.128 for n = 2).

const FIXTURE: TestFixture = { inductanceH: 100e-6, strayF: 3.0 * pF, blockingF: 100e-9, arrangement: 'single' };
const BIASES = [1, 4];
const tag = randomUUID().slice(0, 8);
const code = `SPC-${tag}`;
const lotNumber = `LT-S-${tag}`;
const stationName = `S-${tag}`;
let admin = '';
let engineer = '';
let operator = '';
let token = '';
let serialNo = 0;

// Relative deviations of the 10 baseline parts: mean 0, moving ranges 0.3–0.5 %.
const BASELINE = [0.002, -0.002, 0.001, -0.002, 0.002, -0.001, 0.002, -0.002, 0.001, -0.001];
const mean = BASELINE.reduce((a, b) => a + b, 0) / BASELINE.length;
const mrBar = BASELINE.slice(1).reduce((a, b, i) => a + Math.abs(b - (BASELINE[i] ?? 0)), 0) / (BASELINE.length - 1);
const sigmaRel = mrBar / 1.128;

function unit(relative: number) {
	serialNo++;
	return {
		serial: `${lotNumber}-${String(serialNo).padStart(4, '0')}`,
		testedAt: new Date().toISOString(),
		points: BIASES.map((v) => ({ biasV: v, resonanceHz: resonanceHz(FIXTURE, abruptPartF(v) * (1 + relative)) }))
	};
}

async function postUnits(units: ReturnType<typeof unit>[]) {
	const res = await fetch(`${baseUrl()}/api/v1/results`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() },
		body: JSON.stringify({ lot: lotNumber, units })
	});
	expect(res.status).toBe(201);
	return (await res.json()) as { results: { serial: string; pass: boolean; bin: number }[] };
}

type Alarm = { id: number; rule: string; chart: { characteristic: string; kind: string }; unitSerial: string; occurrences: number; suspect: string; reasoning: string; status: string };
async function alarms(): Promise<Alarm[]> {
	const res = await fetch(`${baseUrl()}/api/v1/alarms?station=${stationName}`, { headers: { cookie: engineer } });
	expect(res.status).toBe(200);
	return ((await res.json()) as { alarms: Alarm[] }).alarms;
}

const json = (cookie: string, method: string, body: unknown) => ({ method, headers: { cookie, 'content-type': 'application/json' }, body: JSON.stringify(body) });

beforeAll(async () => {
	[admin, engineer, operator] = await Promise.all([cookieFor('admin'), cookieFor('engineer'), cookieFor('operator')]);
	const plan = {
		points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4, minF: 12 * pF, maxF: 22 * pF }],
		spc: { baselineParts: 10, rules: ['WE1', 'WE4'] }
	};
	expect((await fetch(`${baseUrl()}/api/v1/products`, json(engineer, 'POST', { code, name: 'SPC test part', plan }))).status).toBe(201);
	const st = await fetch(`${baseUrl()}/api/v1/stations`, json(admin, 'POST', { name: stationName, fixture: FIXTURE }));
	token = ((await st.json()) as { token: string }).token;
	expect((await fetch(`${baseUrl()}/api/v1/lots`, json(operator, 'POST', { number: lotNumber, productCode: code, quantity: 100 }))).status).toBe(201);
	const cal = await fetch(`${baseUrl()}/api/v1/calibrations`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', authorization: `Bearer ${token}` },
		body: JSON.stringify({ references: referenceReadings(FIXTURE) })
	});
	expect(cal.status).toBe(201);
	await postUnits(BASELINE.map(unit));
});

describe('control charts on every post', () => {
	test('the baseline opens no alarm', async () => {
		expect(await alarms()).toEqual([]);
	});

	test('a part inside spec but beyond the 3-sigma limit passes and opens WE1 within its own post', async () => {
		const shift = mean + 6 * sigmaRel; // 6 sigma high: beyond UCL, far inside the spec window
		const answer = await postUnits([unit(shift)]);
		expect(answer.results[0]).toMatchObject({ pass: true, bin: 1 });
		const open = (await alarms()).filter((a) => a.rule === 'WE1' && a.chart.characteristic === 'C@1V');
		expect(open).toHaveLength(1);
		expect(open[0]).toMatchObject({ unitSerial: answer.results[0]?.serial, status: 'open', suspect: 'product' });
		expect(open[0]?.reasoning).toContain('reference part');
	});

	test('a second violation of the same rule extends the open alarm instead of opening another', async () => {
		await postUnits([unit(mean + 6 * sigmaRel)]);
		const we1 = (await alarms()).filter((a) => a.rule === 'WE1' && a.chart.characteristic === 'C@1V');
		expect(we1).toHaveLength(1);
		expect(we1[0]?.occurrences).toBe(2);
	});

	test('eight parts in a row above the centre line open WE4 on the eighth', async () => {
		await postUnits([unit(mean - 1 * sigmaRel)]); // below the centre line: the run starts after it
		const run = Array.from({ length: 8 }, () => unit(mean + 1 * sigmaRel)); // 1 sigma: no WE1
		const answer = await postUnits(run);
		const we4 = (await alarms()).filter((a) => a.rule === 'WE4' && a.chart.characteristic === 'C@1V');
		expect(we4).toHaveLength(1);
		expect(we4[0]?.unitSerial).toBe(answer.results[7]?.serial);
	});

	test('operators acknowledge, engineers close with cause and action; closing needs both', async () => {
		const alarm = (await alarms()).find((a) => a.rule === 'WE1' && a.chart.characteristic === 'C@1V');
		if (!alarm) throw new Error('expected the WE1 alarm');
		const url = `${baseUrl()}/api/v1/alarms/${alarm.id}`;
		expect((await fetch(url, json(operator, 'PATCH', { status: 'acknowledged' }))).status).toBe(200);
		expect((await fetch(url, json(operator, 'PATCH', { status: 'closed', cause: 'Fixture', action: 'Cleaned' }))).status).toBe(403);
		const bad = await fetch(url, json(engineer, 'PATCH', { status: 'closed', cause: '' }));
		expect(bad.status).toBe(400);
		expect(((await bad.json()) as { errors: { path: string }[] }).errors.map((e) => e.path).sort()).toEqual(['action', 'cause']);
		const closed = await fetch(url, json(engineer, 'PATCH', { status: 'closed', cause: 'Socket contamination', action: 'Cleaned the socket, re-ran the reference part' }));
		expect(closed.status).toBe(200);
		expect(((await closed.json()) as { alarm: { status: string; cause: string } }).alarm).toMatchObject({ status: 'closed', cause: 'Socket contamination' });
		// With the old alarm closed, the next violation opens a new one.
		await postUnits([unit(mean + 6 * sigmaRel)]);
		const we1 = (await alarms()).filter((a) => a.rule === 'WE1' && a.chart.characteristic === 'C@1V');
		expect(we1.map((a) => a.status).sort()).toEqual(['closed', 'open']);
	});
});
