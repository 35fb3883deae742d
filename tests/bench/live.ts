// Benchmark (not a test): bin-answer latency of single-part posts, and post → stream-event
// latency with 1 and 200 subscribers, against the built server at BENCH_URL (npm run bench
// starts it on a throwaway database). Prints markdown.
import { randomUUID } from 'node:crypto';
import pg from 'pg';
import { agent, request, subscribe } from './line';

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
 * Stores a million parts for the lot's first station, spread over the past year (one every
 * 30 s), and a point for each on every chart of that station (about 9 M points), straight in
 * SQL: what a year of a busy station leaves behind. Each point refers to its own part. Foreign
 * keys are not checked during the fill (session_replication_role = replica: the rows are
 * consistent by construction), secondary indexes are rebuilt after it, then the tables are vacuumed and analysed as autovacuum would
 * have done over that year.
 */
async function fillMillion(lot: string) {
	const client = new pg.Client({ connectionString: process.env.BENCH_DATABASE_URL });
	await client.connect();
	try {
		const t0 = performance.now();
		await client.query("SET session_replication_role = replica; SET synchronous_commit = off; SET maintenance_work_mem = '512MB'");
		// The secondary indexes are built once after the fill (a sort) instead of row by row; the
		// same definitions, read from the catalogue. Constraint indexes (primary keys) stay.
		const secondary = await client.query<{ indexname: string; indexdef: string }>(
			`SELECT indexname, indexdef FROM pg_indexes i WHERE schemaname = 'public' AND tablename IN ('units', 'chart_points')
			   AND NOT EXISTS (SELECT 1 FROM pg_constraint c WHERE c.conindid = format('%I.%I', i.schemaname, i.indexname)::regclass)`
		);
		for (const ix of secondary.rows) await client.query(`DROP INDEX "${ix.indexname}"`);
		const before = Number((await client.query<{ v: string }>("SELECT nextval('units_id_seq') AS v")).rows[0]?.v);
		await client.query(
			`INSERT INTO units (lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, received_at, bin, pass, bias_v, resonance_hz, bandwidth_hz,
			   capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures)
			 SELECT u.lot_id, u.station_id, u.plan_version_id, u.calibration_id, u.serial || '-m' || g, 'production',
			   now() - (1000001 - g) * interval '30 s', now() - (1000001 - g) * interval '30 s', u.bin, u.pass, u.bias_v, u.resonance_hz, u.bandwidth_hz,
			   u.capacitance_f, u.q, u.cj0_f, u.vj_v, u.m, u.cp_f, u.fit_rms_pct, u.failures
			 FROM (SELECT * FROM units WHERE lot_id = (SELECT id FROM lots WHERE number = $1) ORDER BY id LIMIT 1) u, generate_series(1, 1000000) g`,
			[lot]
		);
		const after = Number((await client.query<{ v: string }>("SELECT nextval('units_id_seq') AS v")).rows[0]?.v);
		const first = await client.query<{ station_id: string; lot_id: string }>('SELECT station_id, lot_id FROM units WHERE id > $1 ORDER BY id LIMIT 1', [before]);
		const stationId = first.rows[0]?.station_id;
		const charts = await client.query<{ id: string; point_count: number }>('SELECT id, point_count FROM charts WHERE station_id = $1 ORDER BY id', [stationId]);
		// One statement for every chart: the points, in the order of their parts.
		await client.query(
			`INSERT INTO chart_points (chart_id, seq, unit_id, value, at, limits_version)
			 SELECT c.id, c.point_count + (u.id - $1 - 1), u.id, 26.5 + 0.2 * sin(u.id), u.tested_at, 1
			 FROM charts c CROSS JOIN units u WHERE c.station_id = $3 AND u.id > $1 AND u.id < $2`,
			[before, after, stationId]
		);
		await client.query('UPDATE charts SET point_count = point_count + $2 WHERE station_id = $1', [stationId, after - before - 1]);
		await client.query(
			`INSERT INTO lot_bin_counts (lot_id, bin, shard, n) SELECT lot_id, bin, 0, count(*) FROM units WHERE id > $1 AND id < $2 GROUP BY lot_id, bin
			 ON CONFLICT (lot_id, bin, shard) DO UPDATE SET n = lot_bin_counts.n + EXCLUDED.n`,
			[before, after]
		);
		for (const ix of secondary.rows) await client.query(ix.indexdef);
		await client.query('VACUUM ANALYZE units');
		await client.query('VACUUM ANALYZE chart_points');
		return { seconds: (performance.now() - t0) / 1000, charts: charts.rows.length, chartIds: charts.rows.map((c) => Number(c.id)), parts: after - before - 1 };
	} finally {
		await client.end();
	}
}

async function streamRun(cookie: string, token: string, lot: string, subscribers: number, posts: number) {
	const seen = new Map<string, number[]>();
	let readyCount = 0;
	const stops = Array.from({ length: subscribers }, () => subscribe(base, cookie, `lot=${encodeURIComponent(lot)}`, seen, () => readyCount++));
	while (readyCount < subscribers) await new Promise((r) => setTimeout(r, 20));
	await new Promise((r) => setTimeout(r, 300));
	const sent: { serial: string; t0: number }[] = [];
	for (let i = 0; i < posts; i++) {
		const r = await post(token, lot);
		sent.push({ serial: r.serials[0] ?? '', t0: r.t0 });
		await new Promise((res) => setTimeout(res, 25));
	}
	await new Promise((r) => setTimeout(r, 1500));
	stops.forEach((s) => s.stop());
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
// BENCH_QUERIES_ONLY=1: only the fill and the queries (for work on a slow query).
const quick = process.env.BENCH_QUERIES_ONLY === '1';
for (let i = 0; i < 40; i++) await post(token, lot); // warm-up; the first 30 parts freeze the charts' limits
const spcFresh = quick ? [] : await spcCost(token, lot, 200);
const answers: number[] = [];
for (let i = 0; i < (quick ? 0 : 300); i++) {
	const r = await post(token, lot);
	answers.push(r.t1 - r.t0);
}
const batch: number[] = [];
for (let i = 0; i < (quick ? 0 : 30); i++) {
	const r = await post(token, lot, 100);
	batch.push(r.t1 - r.t0);
}
const one = quick ? { lat: [], missing: 0 } : await streamRun(cookie, token, lot, 1, 100);
const many = quick ? { lat: [], missing: 0 } : await streamRun(cookie, token, lot, 200, 100);
const filled = await fillMillion(lot);
for (let i = 0; i < 5; i++) await post(token, lot);
const spcMillion = quick ? [] : await spcCost(token, lot, 200);

/**
 * A GET repeated `n` times after 2 unmeasured ones: latency to the last byte, and the size.
 * `before` runs (unmeasured) ahead of each request, e.g. a post so that no cache can answer.
 */
async function timedGet(path: string, n = 20, before?: () => Promise<unknown>) {
	const a = agent(1);
	const lat: number[] = [];
	let bytes = 0;
	let status = 0;
	for (let i = 0; i < n + 2; i++) {
		if (before) await before();
		const t0 = performance.now();
		const r = await request(a, base + path, 'GET', { cookie, accept: path.startsWith('/api/') ? 'application/json' : 'text/html' });
		if (i >= 2) lat.push(performance.now() - t0);
		bytes = Buffer.byteLength(r.text);
		status = r.status;
	}
	a.destroy();
	return { path, lat, bytes, status };
}
const chartId = filled.chartIds[0];
const queries = [
	{ what: 'floor, API', r: await timedGet('/api/v1/floor') },
	{ what: 'floor page (HTML)', r: await timedGet('/floor') },
	{ what: 'chart of 100 000 points, API (I-MR view)', r: await timedGet(`/api/v1/charts/${chartId}?limit=100000`) },
	{ what: 'the same chart, columnar answer (I-MR view)', r: await timedGet(`/api/v1/charts/${chartId}?limit=100000&shape=columns`) },
	{ what: 'lot page (HTML), lot of ~1 M parts, repeated with no new part', r: await timedGet(`/lots/${lot}`) },
	{ what: 'the same page, one new part posted before each request', r: await timedGet(`/lots/${lot}`, 20, () => post(token, lot)) },
	{ what: 'lot units, API, first page', r: await timedGet(`/api/v1/lots/${lot}/units`) }
];
const queryLines = [
	'| query (1 000 000 parts stored, ~9 M chart points) | status | size | p50 | p95 | max | target ≤ 300 ms |',
	'|---|---|---|---|---|---|---|',
	...queries.map(({ what, r }) => {
		const p95 = pct(r.lat, 95);
		return `| ${what}: \`GET ${r.path}\` (${r.lat.length} times) | ${r.status} | ${(r.bytes / 1024).toFixed(0)} KiB | ${ms(pct(r.lat, 50))} | ${ms(p95)} | ${ms(Math.max(...r.lat))} | ${p95 <= 300 ? 'met' : `missed by ${ms(p95 - 300)}`} (p95) |`;
	})
];
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
console.log(['### Bin answers, stream, control rules', '', ...lines, '', `### Queries at 1 M parts (the fill: ${filled.parts} parts over the past year and their points on ${filled.charts} charts, in ${filled.seconds.toFixed(0)} s)`, '', ...queryLines].join('\n'));
process.exit(0);
