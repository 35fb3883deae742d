// Benchmark (not a test): bin-answer latency of single-part posts, and post → stream-event
// latency with 1 and 200 subscribers, against the built server at BENCH_URL (npm run bench
// starts it on a throwaway database). Prints markdown.
import { randomUUID } from 'node:crypto';
import pg from 'pg';

const base = process.env.BENCH_URL ?? '';
if (!base) throw new Error('BENCH_URL is not set: run npm run bench');
const pF = 1e-12;
const FIXTURE = { inductanceH: 100e-6, strayF: 3 * pF, blockingF: 100e-9, arrangement: 'single' as const };
const BIASES = [1, 2, 3, 4, 6, 8, 15, 25];
const partF = (v: number, k: number) => ((40 * pF) / Math.sqrt(1 + v / 0.75) + 0.3 * pF) * k;
const resonance = (c: number) => 1 / (2 * Math.PI * Math.sqrt(FIXTURE.inductanceH * (FIXTURE.strayF + (c * FIXTURE.blockingF) / (c + FIXTURE.blockingF))));

function pct(xs: number[], p: number): number {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))] ?? Number.NaN;
}
const ms = (x: number) => `${x.toFixed(1)} ms`;

async function json(path: string, body: unknown, headers: Record<string, string>) {
	const res = await fetch(base + path, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body: JSON.stringify(body) });
	if (res.status >= 300) throw new Error(`${path}: ${res.status} ${await res.text()}`);
	return res;
}

async function setup() {
	const signIn = await json('/api/v1/session', { email: process.env.BENCH_ADMIN_EMAIL, password: process.env.BENCH_ADMIN_PASSWORD }, {});
	const cookie = (signIn.headers.get('set-cookie') ?? '').split(';')[0] ?? '';
	const tag = randomUUID().slice(0, 6);
	const code = `BEN-${tag}`;
	await json('/api/v1/products', { code, name: 'Bench part', plan: { points: BIASES.map((v) => ({ biasV: v, ...(v === 1 ? { minF: 20 * pF, maxF: 35 * pF } : {}) })), ratio: { lowBiasV: 1, highBiasV: 25, min: 3 } } }, { cookie });
	const st = await json('/api/v1/stations', { name: `B-${tag}`, fixture: FIXTURE }, { cookie });
	const token = ((await st.json()) as { token: string }).token;
	const lot = `LT-B-${tag}`;
	await json('/api/v1/lots', { number: lot, productCode: code, quantity: 1_000_000 }, { cookie });
	await json('/api/v1/calibrations', { references: [10, 47, 100, 220].map((c) => ({ capacitanceF: c * pF, resonanceHz: resonance(c * pF) })) }, { authorization: `Bearer ${token}` });
	return { cookie, token, lot };
}

let serial = 0;
function unit(lot: string) {
	serial++;
	const k = 1 + (((serial * 7919) % 100) - 50) / 10_000;
	return { serial: `${lot}-${serial}`, testedAt: new Date().toISOString(), leakageA: 2e-10, points: BIASES.map((v) => ({ biasV: v, resonanceHz: resonance(partF(v, k)), bandwidthHz: resonance(partF(v, k)) / 250 })) };
}

async function post(token: string, lot: string, n = 1) {
	const units = Array.from({ length: n }, () => unit(lot));
	const t0 = performance.now();
	const res = await json('/api/v1/results', { lot, units }, { authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() });
	const spc = /spc;dur=([\d.]+)/.exec(res.headers.get('server-timing') ?? '');
	return { t0, t1: performance.now(), serials: units.map((u) => u.serial), spcMs: spc ? Number(spc[1]) : Number.NaN };
}

/** Rule-evaluation time per single-part post (the server's own Server-Timing), n posts. */
async function spcCost(token: string, lot: string, n: number): Promise<number[]> {
	const out: number[] = [];
	for (let i = 0; i < n; i++) out.push((await post(token, lot)).spcMs);
	return out;
}

/**
 * Stores a million parts for the lot's station (and a million points on each of its charts),
 * straight in SQL: what a year of a busy station leaves behind.
 */
async function fillMillion(lot: string) {
	const client = new pg.Client({ connectionString: process.env.BENCH_DATABASE_URL });
	await client.connect();
	try {
		const t0 = performance.now();
		await client.query(
			`INSERT INTO units (lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, bin, pass, bias_v, capacitance_f)
			 SELECT u.lot_id, u.station_id, u.plan_version_id, u.calibration_id, u.serial || '-m' || g, 'production', u.tested_at, u.bin, u.pass, u.bias_v, u.capacitance_f
			 FROM (SELECT * FROM units WHERE lot_id = (SELECT id FROM lots WHERE number = $1) ORDER BY id LIMIT 1) u, generate_series(1, 1000000) g`,
			[lot]
		);
		const charts = await client.query<{ id: string; point_count: number }>(
			'SELECT c.id, c.point_count FROM charts c JOIN units u ON u.station_id = c.station_id WHERE u.id = (SELECT min(id) FROM units WHERE lot_id = (SELECT id FROM lots WHERE number = $1)) GROUP BY c.id',
			[lot]
		);
		for (const c of charts.rows) {
			await client.query(
				`INSERT INTO chart_points (chart_id, seq, unit_id, value, at, limits_version)
				 SELECT $1, $2 + g, (SELECT min(id) FROM units), 26.5, now(), 1 FROM generate_series(0, 999999) g`,
				[c.id, c.point_count]
			);
			await client.query('UPDATE charts SET point_count = point_count + 1000000 WHERE id = $1', [c.id]);
		}
		await client.query('ANALYZE units; ANALYZE chart_points;');
		return { seconds: (performance.now() - t0) / 1000, charts: charts.rows.length };
	} finally {
		await client.end();
	}
}

/** Opens a stream and records when each unit event arrives (by serial). */
function subscribe(cookie: string, lot: string, seen: Map<string, number[]>, ready: () => void) {
	const controller = new AbortController();
	void (async () => {
		const res = await fetch(`${base}/api/v1/stream?lot=${lot}`, { headers: { cookie }, signal: controller.signal });
		const reader = res.body?.getReader();
		if (!reader) return;
		const decoder = new TextDecoder();
		let text = '';
		ready();
		try {
			for (;;) {
				const { value, done } = await reader.read();
				if (done) break;
				text += decoder.decode(value, { stream: true });
				let end;
				while ((end = text.indexOf('\n\n')) >= 0) {
					const block = text.slice(0, end);
					text = text.slice(end + 2);
					if (!block.includes('event: unit')) continue;
					const data = block.split('\n').find((l) => l.startsWith('data: '));
					const s = data ? (JSON.parse(data.slice(6)) as { serial: string }).serial : null;
					if (s) seen.set(s, [...(seen.get(s) ?? []), performance.now()]);
				}
			}
		} catch {
			// aborted at the end of the run
		}
	})();
	return () => controller.abort();
}

async function streamRun(cookie: string, token: string, lot: string, subscribers: number, posts: number) {
	const seen = new Map<string, number[]>();
	let readyCount = 0;
	const stops = Array.from({ length: subscribers }, () => subscribe(cookie, lot, seen, () => readyCount++));
	while (readyCount < subscribers) await new Promise((r) => setTimeout(r, 20));
	await new Promise((r) => setTimeout(r, 300));
	const sent: { serial: string; t0: number }[] = [];
	for (let i = 0; i < posts; i++) {
		const r = await post(token, lot);
		sent.push({ serial: r.serials[0] ?? '', t0: r.t0 });
		await new Promise((res) => setTimeout(res, 25));
	}
	await new Promise((r) => setTimeout(r, 1500));
	stops.forEach((s) => s());
	const lat: number[] = [];
	let missing = 0;
	for (const s of sent) {
		const arrivals = seen.get(s.serial) ?? [];
		missing += subscribers - arrivals.length;
		for (const a of arrivals) lat.push(a - s.t0);
	}
	return { lat, missing };
}

const { cookie, token, lot } = await setup();
for (let i = 0; i < 40; i++) await post(token, lot); // warm-up; the first 30 parts freeze the charts' limits
const spcFresh = await spcCost(token, lot, 200);
const answers: number[] = [];
for (let i = 0; i < 300; i++) {
	const r = await post(token, lot);
	answers.push(r.t1 - r.t0);
}
const batch: number[] = [];
for (let i = 0; i < 30; i++) {
	const r = await post(token, lot, 100);
	batch.push(r.t1 - r.t0);
}
const one = await streamRun(cookie, token, lot, 1, 100);
const many = await streamRun(cookie, token, lot, 200, 100);
const filled = await fillMillion(lot);
for (let i = 0; i < 5; i++) await post(token, lot);
const spcMillion = await spcCost(token, lot, 200);
const lines = [
	'| measurement | p50 | p95 | p99 | target |',
	'|---|---|---|---|---|',
	`| bin answer, one 8-point part per post, sequential (300 posts) | ${ms(pct(answers, 50))} | ${ms(pct(answers, 95))} | ${ms(pct(answers, 99))} | p99 ≤ 10 ms at 170 parts/s |`,
	`| bin answer, 100 parts per post (30 posts) = ${(100_000 / pct(batch, 50)).toFixed(0)} parts/s at the median | ${ms(pct(batch, 50))} | ${ms(pct(batch, 95))} | ${ms(pct(batch, 99))} | ≥ 2 000 parts/s |`,
	`| post → unit event, 1 subscriber (100 posts; ${one.missing} missed) | ${ms(pct(one.lat, 50))} | ${ms(pct(one.lat, 95))} | ${ms(pct(one.lat, 99))} | p95 < 250 ms |`,
	`| control rules inside the post (Server-Timing spc), ${'~'}250 points per chart (200 posts, 9 charts each) | ${ms(pct(spcFresh, 50))} | ${ms(pct(spcFresh, 95))} | ${ms(pct(spcFresh, 99))} | < 2 ms |`,
	`| the same with 1 000 000 more parts stored and 1 000 000 more points on each chart (filled in ${filled.seconds.toFixed(0)} s) | ${ms(pct(spcMillion, 50))} | ${ms(pct(spcMillion, 95))} | ${ms(pct(spcMillion, 99))} | < 2 ms |`,
	`| post → unit event, 200 subscribers (100 posts; ${many.missing} missed) | ${ms(pct(many.lat, 50))} | ${ms(pct(many.lat, 95))} | ${ms(pct(many.lat, 99))} | p99 ≤ 250 ms |`
];
console.log(['## Live server', '', ...lines].join('\n'));
process.exit(0);
