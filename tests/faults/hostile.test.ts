// At least 10 000 generated hostile station payloads, and smaller sets for the JSON endpoints people
// use: every one is refused (4xx, never 5xx), nothing is stored, and the app still answers a valid
// request afterwards. The payloads are refused by construction and checked locally before sending
// (tests/faults/hostile.ts). Seeded, so a failure reproduces.
import http from 'node:http';
import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { AlarmChangeBody } from '$lib/schemas/query';
import { LotStatusBody } from '$lib/schemas/setup';
import { CalibrationBody, ResultsBody } from '$lib/schemas/station-api';
import { prng } from '../support/prng';
import { TEST_FIXTURE } from '../e2e/line';
import { referenceReadings } from '../e2e/physics';
import { makePart, setUpFaultLine, sql, startInstance, type FaultLine, type Instance } from './harness';
import { certainRefusal, hostileResult, hostileSmallBody, type Hostile } from './hostile';

const RESULT_PAYLOADS = 10_000;
const SMALL_PAYLOADS = 400; // per endpoint
const WORKERS = 8;
// The station limit is 1 000 requests per 10 s per token (src/lib/server/ratelimit.ts): spread over
// enough stations that no window can pass it, so every answer is about the payload, never a 429.
const STATIONS = 12;

let app: Instance;
let line: FaultLine;
let alarmId = 0;

type Totals = Record<string, string>;
async function totals(): Promise<Totals> {
	const rows = await sql<Record<string, string>>(
		app.dbUrl,
		`SELECT (SELECT count(*) FROM units) AS units, (SELECT count(*) FROM idempotency_keys) AS keys,
		        (SELECT count(*) FROM chart_points) AS chart_points, (SELECT count(*) FROM events) AS events,
		        (SELECT coalesce(sum(n), 0) FROM lot_bin_counts) AS bin_counts, (SELECT count(*) FROM calibrations) AS calibrations,
		        (SELECT count(*) FROM audit_entries) AS audit, (SELECT count(*) FROM alarms) AS alarms,
		        (SELECT string_agg(status, ',' ORDER BY id) FROM alarms) AS alarm_status, (SELECT string_agg(status, ',' ORDER BY id) FROM lots) AS lot_status`
	);
	return { ...(rows[0] ?? {}) };
}

function headersFor(h: Hostile, token: string): Record<string, string> {
	const headers: Record<string, string> = {};
	if (h.contentType !== null) headers['content-type'] = h.contentType;
	if (h.idempotencyKey !== null) headers['idempotency-key'] = h.idempotencyKey;
	if (h.auth === 'station') headers.authorization = `Bearer ${token}`;
	else if (h.auth === 'bad-token') headers.authorization = `Bearer ${'0'.repeat(43)}`;
	else if (h.auth === 'malformed') headers.authorization = 'Bearer';
	else if (h.auth === 'cookie') headers.cookie = line.cookie;
	return headers;
}

/** Sends the requests `WORKERS` at a time; returns status → count, and the first few 5xx or failures. */
async function sendAll(requests: { url: string; method: string; headers: Record<string, string>; body: string; label: string }[]) {
	const statuses: Record<number, number> = {};
	const bad: string[] = [];
	let next = 0;
	const worker = async () => {
		for (let i = next++; i < requests.length; i = next++) {
			const r = requests[i];
			if (!r) break;
			let status = 0;
			try {
				const res = await fetch(r.url, { method: r.method, headers: r.headers, body: r.body, signal: AbortSignal.timeout(20_000) });
				status = res.status;
				const type = res.headers.get('content-type') ?? '';
				const text = await res.text();
				// Refusals from the API are RFC 9457 problem documents, except SvelteKit's own CSRF guard:
				// a POST with a form content type (text/plain is fetch's default) and no Origin header is
				// refused with a plain-text 403 before any hook of ours runs.
				const csrf = status === 403 && /cross-site/i.test(text) && !/json/i.test(r.headers['content-type'] ?? 'text/plain');
				if (status >= 400 && !csrf && !(type.includes('application/problem+json') && JSON.parse(text).status === status)) bad.push(`${r.label}: ${status} not a problem document`);
			} catch (e) {
				bad.push(`${r.label}: ${e instanceof Error ? e.message : String(e)}`);
			}
			statuses[status] = (statuses[status] ?? 0) + 1;
			if (status >= 500 || (status >= 200 && status < 300)) bad.push(`${r.label}: ${status}`);
		}
	};
	await Promise.all(Array.from({ length: WORKERS }, worker));
	return { statuses, bad };
}

/**
 * A large body through node:http, read as the server answers: the server refuses early and closes
 * the connection while the body is still being sent, so a write may fail with EPIPE/ECONNRESET
 * before the answer is read (a race in TCP, not an answer). Such a try is repeated, up to three.
 */
async function bigPost(path: string, headers: Record<string, string>, bytes: number, chunked: boolean): Promise<number> {
	for (let attempt = 1; ; attempt++) {
		try {
			return await bigPostOnce(path, headers, bytes, chunked);
		} catch (e) {
			const code = e instanceof Error && 'code' in e ? String(e.code) : '';
			if (attempt >= 3 || !['EPIPE', 'ECONNRESET'].includes(code)) throw e;
		}
	}
}

function bigPostOnce(path: string, headers: Record<string, string>, bytes: number, chunked: boolean): Promise<number> {
	const u = new URL(path, app.url);
	return new Promise((resolve, reject) => {
		let answered = false;
		const req = http.request(
			{ host: u.hostname, port: u.port, path: u.pathname, method: 'POST', agent: false, headers: { ...headers, ...(chunked ? {} : { 'content-length': String(bytes) }) } },
			(res) => {
				answered = true;
				res.resume();
				resolve(res.statusCode ?? 0);
				req.destroy();
			}
		);
		req.on('error', (e) => {
			if (!answered) reject(e);
		});
		req.setTimeout(30_000, () => req.destroy(new Error('timeout')));
		const chunk = Buffer.alloc(64 * 1024, 'x');
		let sent = 0;
		// One chunk per turn of the event loop, so an early answer is read before the next write.
		const pump = () => {
			if (answered || req.destroyed) return;
			if (sent >= bytes) return void req.end();
			sent += chunk.length;
			if (req.write(chunk)) setImmediate(pump);
			else req.once('drain', pump);
		};
		req.write('{"lot":"LT-x","units":[{"serial":"');
		pump();
	});
}

beforeAll(async () => {
	const t0 = Date.now();
	const adminUrl = process.env.BIASLINE_TEST_ADMIN_URL;
	if (!adminUrl) throw new Error('BIASLINE_TEST_ADMIN_URL is not set: run with npm test');
	app = await startInstance({ name: 'hostile', adminUrl, asyncCommit: true });
	console.log(`[faults] hostile: app up in ${Date.now() - t0} ms`);
	line = await setUpFaultLine(app.url, { prefix: 'HOS', stations: STATIONS, spc: { baselineParts: 10, rules: ['WE1'] } });
	// One open alarm to aim the alarm PATCH fuzz at: ten steady parts freeze the limits, then one far out.
	const station = line.stations[0];
	if (!station) throw new Error('no station');
	const post = async (parts: ReturnType<typeof makePart>[]) => {
		const res = await fetch(`${app.url}/api/v1/results`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', authorization: `Bearer ${station.token}`, 'idempotency-key': randomUUID() },
			body: JSON.stringify({ lot: line.lotNumber, units: parts })
		});
		expect(res.status).toBe(201);
	};
	await post(Array.from({ length: 10 }, (_, i) => makePart(`${line.lotNumber}-B${i}`, line.biases, 0.002 * Math.sin(i + 1))));
	await post([makePart(`${line.lotNumber}-OUT`, line.biases, 0.2)]);
	const alarms = (await (await fetch(`${app.url}/api/v1/alarms?status=open`, { headers: { cookie: line.cookie } })).json()) as { alarms: { id: number }[] };
	alarmId = alarms.alarms[0]?.id ?? 0;
	expect(alarmId).toBeGreaterThan(0);
	console.log(`[faults] hostile: line set up in ${Date.now() - t0} ms`);
});
afterAll(async () => {
	await app?.close();
});

describe('hostile payloads', () => {
	test(`${RESULT_PAYLOADS} generated station posts: all refused with a 4xx problem, nothing stored`, async () => {
		const rand = prng(0x7e57);
		const valid = { lot: line.lotNumber, units: [1, 2, 3].map((i) => ({ ...makePart(`${line.lotNumber}-V${i}`, line.biases), kind: 'production', temperatureC: 24.8, leakageA: 2.1e-10 })) };
		expect(ResultsBody.safeParse(valid).success).toBe(true);
		const payloads = Array.from({ length: RESULT_PAYLOADS }, () => hostileResult(rand, structuredClone(valid), ResultsBody));
		// Refused by construction: checked here before a single request is sent.
		expect(payloads.filter((h) => !certainRefusal(h, ResultsBody)).map((h) => h.label)).toEqual([]);
		const reasons: Record<string, number> = {};
		for (const h of payloads) reasons[h.because] = (reasons[h.because] ?? 0) + 1;

		const before = await totals();
		const t0 = Date.now();
		const { statuses, bad } = await sendAll(
			payloads.map((h, i) => ({
				url: `${app.url}/api/v1/results`,
				method: 'POST',
				headers: headersFor(h, line.stations[i % STATIONS]?.token ?? ''),
				body: h.body,
				label: `#${i} ${h.label}`
			}))
		);
		// Bodies over the limits: 10 MB with a length (adapter-node's BODY_SIZE_LIMIT, 2 MB here) and
		// streamed without one, and 1.5 MB (under that limit, over the endpoint's 1 MiB).
		const token = line.stations[1]?.token ?? '';
		const big = { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': 'big-body' };
		const bigStatuses = [
			await bigPost('/api/v1/results', big, 10 * 1024 * 1024, false),
			await bigPost('/api/v1/results', big, 10 * 1024 * 1024, true),
			await bigPost('/api/v1/results', big, 1.5 * 1024 * 1024, false),
			await bigPost('/api/v1/results', big, 1.5 * 1024 * 1024, true)
		];
		const after = await totals();

		console.log(`[faults] hostile results: reasons ${JSON.stringify(reasons)}; answers ${JSON.stringify(statuses)}; big bodies ${bigStatuses.join(', ')}; ${Date.now() - t0} ms`);
		expect(bad.slice(0, 20)).toEqual([]);
		expect(statuses[429] ?? 0).toBe(0);
		expect(bigStatuses).toEqual([413, 413, 413, 413]);
		expect(after).toEqual(before);

		// Still answering: a valid post is accepted and stored.
		const res = await fetch(`${app.url}/api/v1/results`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() },
			body: JSON.stringify(valid)
		});
		expect(res.status).toBe(201);
		expect(Number((await totals()).units)).toBe(Number(before.units) + 3);
	});

	test(`${SMALL_PAYLOADS} each to calibrations, lot PATCH and alarm PATCH: refused, nothing changed`, async () => {
		const rand = prng(0xca1b);
		const station = line.stations[2];
		if (!station) throw new Error('no station');
		const calValid = { references: referenceReadings(TEST_FIXTURE) };
		const lotValid = { status: 'closed' };
		const alarmValid = { status: 'closed', cause: 'Socket contact worn on the fixture', action: 'Replaced the socket and re-ran the reference part' };
		expect(CalibrationBody.safeParse(calValid).success && LotStatusBody.safeParse(lotValid).success && AlarmChangeBody.safeParse(alarmValid).success).toBe(true);
		// The calibration body nests its values one level down: mutate one reference, or the whole.
		const calBody = (): string => {
			if (rand() < 0.4) return hostileSmallBody(rand, calValid);
			const refs = calValid.references.map((r) => JSON.stringify(r));
			const i = Math.floor(rand() * refs.length);
			refs[i] = hostileSmallBody(rand, { ...calValid.references[i] });
			return `{"references":[${refs.join(',')}]}`;
		};
		const refused = (schema: typeof CalibrationBody | typeof LotStatusBody | typeof AlarmChangeBody, text: string) => {
			try {
				return !schema.safeParse(JSON.parse(text)).success;
			} catch {
				return true;
			}
		};
		const sets: { name: string; url: string; method: string; schema: typeof CalibrationBody | typeof LotStatusBody | typeof AlarmChangeBody; make: () => string; headers: Record<string, string> }[] = [
			{ name: 'calibrations', url: `${app.url}/api/v1/calibrations`, method: 'POST', schema: CalibrationBody, make: calBody, headers: { authorization: `Bearer ${station.token}` } },
			{ name: 'lot PATCH', url: `${app.url}/api/v1/lots/${line.lotNumber}`, method: 'PATCH', schema: LotStatusBody, make: () => hostileSmallBody(rand, lotValid), headers: { cookie: line.cookie, origin: app.url } },
			{ name: 'alarm PATCH', url: `${app.url}/api/v1/alarms/${alarmId}`, method: 'PATCH', schema: AlarmChangeBody, make: () => hostileSmallBody(rand, alarmValid), headers: { cookie: line.cookie, origin: app.url } }
		];
		const requests: { url: string; method: string; headers: Record<string, string>; body: string; label: string }[] = [];
		for (const s of sets) {
			let made = 0;
			let tries = 0;
			while (made < SMALL_PAYLOADS && tries++ < SMALL_PAYLOADS * 20) {
				const body = s.make();
				// A mutation that happens to stay valid (an extra field, say) is not a hostile payload: skip it.
				if (!refused(s.schema, body)) continue;
				requests.push({ url: s.url, method: s.method, headers: { 'content-type': 'application/json', ...s.headers }, body, label: `${s.name} ${body.slice(0, 60)}` });
				made++;
			}
			expect(made, s.name).toBe(SMALL_PAYLOADS);
		}
		const before = await totals();
		const bad: string[] = [];
		for (const s of sets) {
			const t0 = Date.now();
			const sent = await sendAll(requests.filter((r) => r.url === s.url));
			bad.push(...sent.bad);
			console.log(`[faults] hostile ${s.name}: answers ${JSON.stringify(sent.statuses)} in ${Date.now() - t0} ms`);
		}
		const after = await totals();
		expect(bad.slice(0, 20)).toEqual([]);
		expect(after).toEqual(before);
		// Still answering: the valid alarm change is applied.
		const res = await fetch(`${app.url}/api/v1/alarms/${alarmId}`, { method: 'PATCH', headers: { 'content-type': 'application/json', cookie: line.cookie, origin: app.url }, body: JSON.stringify(alarmValid) });
		expect(res.status).toBe(200);
	});
});
