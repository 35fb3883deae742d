import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce } from './helpers';
import { jsonInit as json, setUpLine, type TestLine, type TestPart } from './line';
import { pF } from './physics';

// Control charts inside the post. Rules as labelled in tests/reference/spc/rules.md:
// WE1 (Western Electric 1956, rule 1): one point beyond 3 sigma; WE4: eight successive points
// on one side of the centre line. The baseline is 10 parts with a hand-made spread; the
// individuals chart's sigma is MR̄/d2 (NIST/SEMATECH e-Handbook 6.3.2.2; d2 = 1.128 for n = 2).

let admin = '';
let engineer = '';
let operator = '';
let line: TestLine;
let stationName = '';

// Relative deviations of the 10 baseline parts: mean 0, moving ranges 0.3–0.5 %.
const BASELINE = [0.002, -0.002, 0.001, -0.002, 0.002, -0.001, 0.002, -0.002, 0.001, -0.001];
const mean = BASELINE.reduce((a, b) => a + b, 0) / BASELINE.length;
const mrBar = BASELINE.slice(1).reduce((a, b, i) => a + Math.abs(b - (BASELINE[i] ?? 0)), 0) / (BASELINE.length - 1);
const sigmaRel = mrBar / 1.128;

const unit = (relative: number) => line.part(relative);
const postUnits = (parts: TestPart[]) => line.post(parts);

type Alarm = { id: number; rule: string; chart: { characteristic: string; kind: string }; unitSerial: string; occurrences: number; suspect: string; reasoning: string; status: string };
async function alarms(): Promise<Alarm[]> {
	const res = await fetch(`${baseUrl()}/api/v1/alarms?station=${stationName}`, { headers: { cookie: engineer } });
	expect(res.status).toBe(200);
	return ((await res.json()) as { alarms: Alarm[] }).alarms;
}

beforeAll(async () => {
	[admin, engineer, operator] = await Promise.all([cookieOnce('admin'), cookieOnce('engineer'), cookieOnce('operator')]);
	line = await setUpLine({
		prefix: 'SPC',
		biases: [1, 4],
		plan: {
			points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4, minF: 12 * pF, maxF: 22 * pF }],
			spc: { baselineParts: 10, rules: ['WE1', 'WE4'] }
		}
	});
	stationName = line.stationName;
	// The engineer follows the product, so its alarms reach them by e-mail.
	const subscribe = await fetch(`${baseUrl()}/account?/subscribe`, {
		method: 'POST',
		headers: { cookie: engineer, origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded', accept: 'application/json' },
		body: new URLSearchParams({ scope: 'product', product: String(line.productId) })
	});
	expect(subscribe.status).toBe(200);
	// One message per alarm (the demo gives this person a 15-minute digest).
	const digest = await fetch(`${baseUrl()}/account?/digest`, {
		method: 'POST',
		headers: { cookie: engineer, origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded', accept: 'application/json' },
		body: new URLSearchParams({ digest: '0' })
	});
	expect(digest.status).toBe(200);
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

	test('the individuals chart shows the frozen baseline limits: CL = mean, UCL/LCL = CL ± 3·MR̄/d2', async () => {
		const list = await fetch(`${baseUrl()}/api/v1/charts?station=${stationName}`, { headers: { cookie: engineer } });
		const charts = ((await list.json()) as { charts: { id: number; characteristic: string; status: string }[] }).charts;
		const c1 = charts.find((c) => c.characteristic === 'C@1V');
		expect(c1?.status).toBe('active');
		const res = await fetch(`${baseUrl()}/api/v1/charts/${c1?.id}?view=imr&limit=1000`, { headers: { cookie: engineer } });
		const detail = (await res.json()) as {
			limits: { shewhart: { centerLine: number; upperControlLimit: number; lowerControlLimit: number } };
			points: { value: number }[];
			capability: { cpk: { value: number } } | null;
			spec: { lowerSpecLimit: number; upperSpecLimit: number };
		};
		// NIST/SEMATECH e-Handbook 6.3.2.2: limits of an individuals chart are x̄ ± 3·MR̄/1.128.
		const base = detail.points.slice(0, BASELINE.length).map((p) => p.value);
		const xbar = base.reduce((a, b) => a + b, 0) / base.length;
		const mr = base.slice(1).reduce((a, b, i) => a + Math.abs(b - (base[i] ?? 0)), 0) / (base.length - 1);
		expect(detail.limits.shewhart.centerLine).toBeCloseTo(xbar, 9);
		expect(detail.limits.shewhart.upperControlLimit - xbar).toBeCloseTo((3 * mr) / 1.128, 3);
		expect(detail.spec).toEqual({ lowerSpecLimit: 20, upperSpecLimit: 35 });
		expect(detail.capability?.cpk.value).toBeGreaterThan(0);
	});

	test('an engineer recomputes limits from a range with an excluded point; the new limits are versioned with their exclusions', async () => {
		const list = await fetch(`${baseUrl()}/api/v1/charts?station=${stationName}`, { headers: { cookie: engineer } });
		const c1 = ((await list.json()) as { charts: { id: number; characteristic: string }[] }).charts.find((c) => c.characteristic === 'C@1V');
		const url = `${baseUrl()}/api/v1/charts/${c1?.id}/limits`;
		const body = { fromSeq: 0, toSeq: 12, exclusions: [{ seq: 10, reason: 'Shifted part, socket contamination' }], reason: 'Exclude the contaminated run' };
		expect((await fetch(url, json(operator, 'POST', body))).status).toBe(403);
		const bad = await fetch(url, json(engineer, 'POST', { ...body, exclusions: [{ seq: 10, reason: '' }], reason: '' }));
		expect(bad.status).toBe(400);
		const res = await fetch(url, json(engineer, 'POST', body));
		expect(res.status).toBe(201);
		expect(((await res.json()) as { version: number }).version).toBe(2);
		const detail = await fetch(`${baseUrl()}/api/v1/charts/${c1?.id}`, { headers: { cookie: engineer } });
		const history = ((await detail.json()) as { limitsHistory: { version: number; exclusions: { seq: number }[] }[] }).limitsHistory;
		expect(history.map((h) => h.version)).toEqual([2, 1]);
		expect(history[0]?.exclusions).toEqual([{ seq: 10, reason: 'Shifted part, socket contamination' }]);
	});

	test('the alarm e-mail reaches the local SMTP server and shows in the admin outbox', async () => {
		// Subject format of a single-alarm message: "[Biasline] <rule> on <station> · <chart> · <product>".
		const outbox = async () => (await fetch(`${baseUrl()}/admin/outbox`, { headers: { cookie: admin } })).text();
		await expect.poll(outbox, { timeout: 30_000, interval: 1000 }).toContain(`WE1 on ${stationName}`);
		expect(await outbox()).toContain('noor.haddad@corvane.example');
	});
});
