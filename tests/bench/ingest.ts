// Benchmark (not a test): ingest beside its two ceilings, in one run on one database.
//   ingest           N stations (each its own keep-alive connection) post batches of 8-point parts
//                    to the built app at BENCH_URL, closed loop; then the paced line: 170 parts/s
//                    from 20 stations, single-part posts.
//   HTTP ceiling     the same client, the same concurrency and bodies against a bare node:http
//                    server that parses the JSON and answers a fixed bin (http-ceiling.mjs).
//   storage ceiling  N database connections writing the same rows into the same tables as the
//                    ingest's transaction, with the same statement shapes and no judging, no HTTP.
// Prints markdown. Runs on a fresh database (npm run bench starts the app on one).
import { spawn } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import pg from 'pg';
import { agent, closedLoop, cpuSeconds, cpuShare, maxOf, ms, paced, pct, postParts, refusals, setUpLine, waitSampler, withCpu, type LoadResult } from './line';

const base = process.env.BENCH_URL ?? '';
const dbUrl = process.env.BENCH_DATABASE_URL ?? '';
if (!base || !dbUrl) throw new Error('BENCH_URL and BENCH_DATABASE_URL are not set: run npm run bench');
const CONCURRENCY = (process.env.BENCH_INGEST_STATIONS ?? '10,20').split(',').map(Number);
const BATCH = Number(process.env.BENCH_INGEST_BATCH ?? 100);
const SECONDS = Number(process.env.BENCH_INGEST_SECONDS ?? 20);
const PACED_SECONDS = Number(process.env.BENCH_PACED_SECONDS ?? 30);
const here = path.dirname(fileURLToPath(import.meta.url));

const line = await setUpLine(base, Math.max(20, ...CONCURRENCY));
const tokens = line.stations.map((s) => s.token);
const resultsUrl = `${base}/api/v1/results`;
{
	// Warm-up: every station's charts freeze their limits (the first 30 parts), the server's
	// code paths are compiled, connections are open.
	// Four stations at a time, each post retried while the server answers 503/429.
	const a = agent(4);
	const until = async (token: string, n: number) => {
		while ((await postParts(a, resultsUrl, token, line.lot, n)).status !== 201) await new Promise((r) => setTimeout(r, 1000));
	};
	for (let i = 0; i < tokens.length; i += 4) {
		await Promise.all(tokens.slice(i, i + 4).map(async (t) => {
			await until(t, 40);
			await until(t, BATCH);
		}));
	}
	a.destroy();
}

/** The bare HTTP server, as a process of its own. */
async function startCeiling(): Promise<{ url: string; pid: number; stop: () => void }> {
	const child = spawn(process.execPath, [path.join(here, 'http-ceiling.mjs')], { stdio: ['ignore', 'pipe', 'inherit'] });
	const port = await new Promise<number>((resolve, reject) => {
		child.stdout.once('data', (d: Buffer) => resolve(Number(d.toString().trim())));
		child.once('exit', () => reject(new Error('http-ceiling.mjs exited')));
	});
	return { url: `http://127.0.0.1:${port}/api/v1/results`, pid: child.pid ?? 0, stop: () => child.kill('SIGTERM') };
}

type DbStats = { xact: number; ins: number; upd: number };
async function dbStats(c: pg.Client): Promise<DbStats> {
	await new Promise((r) => setTimeout(r, 1200)); // backends flush their counters about every second
	const r = await c.query<{ xact_commit: string; tup_inserted: string; tup_updated: string }>('SELECT xact_commit, tup_inserted, tup_updated FROM pg_stat_database WHERE datname = current_database()');
	const row = r.rows[0];
	return { xact: Number(row?.xact_commit), ins: Number(row?.tup_inserted), upd: Number(row?.tup_updated) };
}

const admin = new pg.Client({ connectionString: dbUrl });
await admin.connect();
const probe = new pg.Client({ connectionString: dbUrl });
await probe.connect();
/** Where the database connections' time went during a load (see waitSampler). */
async function sampled<T>(fn: () => Promise<T>): Promise<{ value: T; waits: string }> {
	const w = waitSampler(probe);
	const value = await fn();
	const r = await w.stop();
	return { value, waits: `on average ${r.busyBackends.toFixed(1)} connections busy: ${r.lines.join('; ')}` };
}
const stationIds = new Map<string, number>();
for (const r of (await admin.query<{ id: string; name: string }>('SELECT id, name FROM stations')).rows) stationIds.set(r.name, Number(r.id));

type Template = { units: Record<string, unknown>[]; points: { chart_id: string; unit_id: string; value: number; limits_version: number; rules: string[] }[] };
/** The newest stored batch of a station: the rows the storage ceiling writes again. */
async function template(stationId: number): Promise<Template> {
	const u = await admin.query<{ rows: Record<string, unknown>[] }>(
		`SELECT json_agg(x) AS rows FROM (SELECT id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
		   bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures
		 FROM units WHERE station_id = $1 ORDER BY id DESC LIMIT $2) x`,
		[stationId, BATCH]
	);
	const units = u.rows[0]?.rows ?? [];
	const p = await admin.query<Template['points'][number]>('SELECT chart_id, unit_id, value, limits_version, rules FROM chart_points WHERE unit_id = ANY($1::bigint[])', [units.map((x) => x.id)]);
	return { units, points: p.rows };
}

const UNITS_SQL = `INSERT INTO units (id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
   bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures)
 SELECT id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
   bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures
 FROM jsonb_to_recordset($1::jsonb) AS x(id bigint, lot_id bigint, station_id bigint, plan_version_id bigint, calibration_id bigint,
   serial text, kind text, tested_at timestamptz, temperature_c float8, leakage_a float8, bin smallint, pass boolean,
   bias_v float8[], resonance_hz float8[], bandwidth_hz float8[], capacitance_f float8[], q float8[],
   cj0_f float8, vj_v float8, m float8, cp_f float8, fit_rms_pct float8, failures jsonb)`;

/**
 * Storage ceiling: per connection a loop of transactions, each writing one batch of a station's
 * rows the way an accepted post does — the idempotency key with its answer, ids drawn, the units
 * in one statement, the chart points with the charts' new state in one statement, the lot's bin
 * counters, the live events, the station's last-seen time. `unitsOnly`: just the units
 * statement, one per batch. No SELECTs of the ingest (key check, station, lot, plan, chart
 * locks, rolling yield), no rate-limit counter, no NOTIFY, no judging.
 */
async function storageCeiling(n: number, unitsOnly: boolean) {
	let rows = 0;
	let parts = 0;
	let batches = 0;
	const latencies: number[] = [];
	const countFrom = performance.now() + 2000;
	const until = countFrom + SECONDS * 1000;
	await Promise.all(
		line.stations.slice(0, n).map(async (s, w) => {
			const sid = stationIds.get(s.name) ?? 0;
			const tpl = await template(sid);
			const c = new pg.Client({ connectionString: dbUrl });
			await c.connect();
			const charts = (await c.query<{ id: string; status: string; point_count: number; limits: unknown; limits_version: number; rule_state: unknown }>('SELECT id, status, point_count, limits, limits_version, rule_state FROM charts WHERE station_id = $1', [sid])).rows;
			const chartOf = new Map(charts.map((ch) => [String(ch.id), ch]));
			let k = 0;
			while (performance.now() < until) {
				const t0 = performance.now();
				k++;
				const tag = `-s${w}-${k}-`;
				if (unitsOnly) {
					const ids = (await c.query<{ id: string }>("SELECT nextval('units_id_seq') AS id FROM generate_series(1, $1)", [tpl.units.length])).rows;
					const records = tpl.units.map((u, i) => ({ ...u, id: Number(ids[i]?.id), serial: `${String(u.serial)}${tag}`, tested_at: new Date().toISOString() }));
					await c.query(UNITS_SQL, [JSON.stringify(records)]);
					if (t0 >= countFrom) {
						rows += records.length;
						parts += records.length;
					}
				} else {
					await c.query('BEGIN');
					const response = { results: tpl.units.map((u) => ({ serial: u.serial, bin: u.bin, pass: u.pass, capacitanceF: u.capacitance_f, q: u.q, fit: { cj0F: u.cj0_f, vjV: u.vj_v, m: u.m, cpF: u.cp_f, rmsPct: u.fit_rms_pct }, failures: u.failures })) };
					await c.query('INSERT INTO idempotency_keys (station_id, key, request_hash, status, response) VALUES ($1, $2, $3, 201, $4) ON CONFLICT DO NOTHING RETURNING key', [sid, `ceiling${tag}`, 'x'.repeat(64), JSON.stringify(response)]);
					const ids = (await c.query<{ id: string }>("SELECT nextval('units_id_seq') AS id FROM generate_series(1, $1)", [tpl.units.length])).rows;
					const newId = new Map<string, number>();
					const now = new Date().toISOString();
					const records: Record<string, unknown>[] = tpl.units.map((u, i) => {
						const id = Number(ids[i]?.id);
						newId.set(String(u.id), id);
						return { ...u, id, serial: `${String(u.serial)}${tag}`, tested_at: now };
					});
					await c.query(UNITS_SQL, [JSON.stringify(records)]);
					const points = tpl.points.map((p) => {
						const ch = chartOf.get(String(p.chart_id));
						const seq = ch ? ch.point_count++ : 0;
						return { chart_id: p.chart_id, seq, unit_id: newId.get(String(p.unit_id)), value: p.value, at: now, limits_version: p.limits_version, rules: p.rules };
					});
					await c.query(
						`WITH pts AS (
						   INSERT INTO chart_points (chart_id, seq, unit_id, value, at, limits_version, rules)
						   SELECT chart_id, seq, unit_id, value, at, limits_version, rules FROM jsonb_to_recordset($1::jsonb)
						     AS x(chart_id bigint, seq integer, unit_id bigint, value float8, at timestamptz, limits_version integer, rules text[]))
						 UPDATE charts c SET status = x.status, point_count = x.point_count, limits = x.limits, limits_version = x.limits_version, rule_state = x.rule_state
						 FROM jsonb_to_recordset($2::jsonb) AS x(id bigint, status text, point_count integer, limits jsonb, limits_version integer, rule_state jsonb)
						 WHERE c.id = x.id`,
						[JSON.stringify(points), JSON.stringify(charts)]
					);
					const perBin = new Map<number, number>();
					for (const r of records) perBin.set(Number(r.bin), (perBin.get(Number(r.bin)) ?? 0) + 1);
					await c.query(
						`INSERT INTO lot_bin_counts (lot_id, bin, shard, n) SELECT $1, bin, $3, n FROM jsonb_to_recordset($2::jsonb) AS x(bin smallint, n bigint)
						 ON CONFLICT (lot_id, bin, shard) DO UPDATE SET n = lot_bin_counts.n + EXCLUDED.n`,
						[records[0]?.lot_id, JSON.stringify([...perBin].map(([bin, n]) => ({ bin, n }))), sid]
					);
					const events: Record<string, unknown>[] = records.map((r) => ({ type: 'unit', station_id: sid, lot_id: r.lot_id, payload: { serial: r.serial, lot: line.lot, station: s.name, bin: r.bin, pass: r.pass, testedAt: r.tested_at, kind: r.kind } }));
					events.push({ type: 'yield', station_id: sid, lot_id: records[0]?.lot_id, payload: { station: s.name, lot: line.lot } });
					await c.query(
						`INSERT INTO events (type, station_id, lot_id, payload) SELECT type, station_id, lot_id, payload FROM jsonb_to_recordset($1::jsonb) AS x(type text, station_id bigint, lot_id bigint, payload jsonb)`,
						[JSON.stringify(events)]
					);
					await c.query('UPDATE stations SET last_seen_at = now(), current_lot_id = $1 WHERE id = $2', [records[0]?.lot_id, sid]);
					await c.query('COMMIT');
					if (t0 >= countFrom) {
						rows += 1 + records.length + points.length + charts.length + perBin.size + events.length + 1;
						parts += records.length;
					}
				}
				if (t0 >= countFrom) {
					batches++;
					latencies.push(performance.now() - t0);
				}
			}
			await c.end();
		})
	);
	return { rows, parts, batches, seconds: SECONDS, latencies };
}

const fmt = (x: number) => x.toLocaleString('en-GB', { maximumFractionDigits: 0 });
const rate = (r: { parts: number; seconds: number }) => r.parts / r.seconds;
const lat = (xs: number[]) => `${ms(pct(xs, 50))} / ${ms(pct(xs, 95))} / ${ms(pct(xs, 99))} / ${ms(maxOf(xs))}`;
const timing = (r: LoadResult, k: string) => ms(pct(r.timings[k] ?? [], 50));

const rows: string[] = [];
const notes: string[] = [];
const verdicts: string[] = [];
const ceiling = await startCeiling();
try {
	for (const n of CONCURRENCY) {
		const st0 = await dbStats(admin);
		const ingW = await sampled(() => withCpu(() => closedLoop({ url: resultsUrl, tokens: tokens.slice(0, n), lot: line.lot, batch: BATCH, seconds: SECONDS, warmS: 2 })));
		const ing = ingW.value;
		const st1 = await dbStats(admin);
		const hc0 = cpuSeconds(ceiling.pid);
		const http = await withCpu(() => closedLoop({ url: ceiling.url, tokens: tokens.slice(0, n), lot: line.lot, batch: BATCH, seconds: Math.min(SECONDS, 10), warmS: 1 }));
		const httpCpu = cpuSeconds(ceiling.pid) - hc0;
		const full = await withCpu(() => storageCeiling(n, false));
		const bare = await withCpu(() => storageCeiling(n, true));
		const ingRate = rate(ing.value);
		const fullRate = rate(full.value);
		const bareRate = rate(bare.value);
		const httpRate = rate(http.value);
		const posts = ing.value.posts + 2 * n; // the warm-up second's posts count in the database's figures too
		rows.push(
			`| ingest, ${n} stations × batches of ${BATCH}${refusals(ing.value)} | **${fmt(ingRate)}** parts/s | ${lat(ing.value.latencies)} (per batch) | ${cpuShare(ing)} |`,
			`| HTTP ceiling (bare node:http, same client and bodies) | ${fmt(httpRate)} parts/s | ${lat(http.value.latencies)} | ceiling ${(httpCpu / http.wallS).toFixed(2)} + client ${(http.value.parts ? http.clientS / http.wallS : 0).toFixed(2)} cores |`,
			`| storage ceiling, everything the post writes (${n} connections) | ${fmt(fullRate)} parts/s = ${fmt(full.value.rows / full.value.seconds)} rows/s | ${lat(full.value.latencies)} (per batch) | ${cpuShare(full, 'app (idle)')} |`,
			`| storage ceiling, units only (${n} connections) | ${fmt(bareRate)} parts/s | ${lat(bare.value.latencies)} (per batch) | ${cpuShare(bare, 'app (idle)')} |`,
			`| **ratios at ${n} stations** | ingest / storage ceiling **${((100 * ingRate) / fullRate).toFixed(0)} %** (units only: ${((100 * ingRate) / bareRate).toFixed(0)} %); ingest / HTTP ceiling **${((100 * ingRate) / httpRate).toFixed(1)} %** | | |`
		);
		const dx = st1.xact - st0.xact;
		notes.push(
			`- ${n} stations: per post of ${BATCH} parts the server spent (Server-Timing, median) judge ${timing(ing.value, 'judge')}, control rules ${timing(ing.value, 'spc')} of a ${ms(pct(ing.value.latencies, 50))} answer; the database counted ${(dx / posts).toFixed(1)} transactions per post (each statement outside the post's transaction is one), ${((st1.ins - st0.ins) / (posts * BATCH)).toFixed(1)} rows inserted and ${((st1.upd - st0.upd) / posts).toFixed(1)} rows updated per part / per post.`,
			`  - database connections during the ingest (sampled every 0.1 s): ${ingW.waits}`
		);
		verdicts.push(
			`| ingest ≥ 50 % of the storage ceiling (${n} stations) | ${((100 * ingRate) / fullRate).toFixed(0)} % (${fmt(ingRate)} of ${fmt(fullRate)} parts/s) | ${ingRate >= 0.5 * fullRate ? 'met' : `missed by ${(50 - (100 * ingRate) / fullRate).toFixed(0)} points`} |`,
			`| ingest ≥ 2 000 parts/s of 8 points (${n} stations) | ${fmt(ingRate)} parts/s | ${ingRate >= 2000 ? 'met' : `missed by ${fmt(2000 - ingRate)} parts/s (${((100 * ingRate) / 2000).toFixed(0)} % of it)`} |`
		);
	}
	// The paced line: 170 parts/s from 20 stations, one part per post, ~8.5 posts/s each.
	const line20 = tokens.slice(0, 20);
	const pacedW = await sampled(() => withCpu(() => paced({ url: resultsUrl, tokens: line20, lot: line.lot, perStationHz: 170 / 20, seconds: PACED_SECONDS, warmS: 5 })));
	const pacedRun = pacedW.value;
	const pacedHttp = await withCpu(() => paced({ url: ceiling.url, tokens: line20, lot: line.lot, perStationHz: 170 / 20, seconds: 15, warmS: 2 }));
	const p = pacedRun.value;
	rows.push(
		`| paced line: 170 parts/s from 20 stations, single-part posts (${p.posts} posts in ${PACED_SECONDS} s; ${p.late} could not start on time${refusals(p)}) | ${fmt(rate(p))} parts/s | **${lat(p.latencies)}** | ${cpuShare(pacedRun)} |`,
		`| the same pace against the HTTP ceiling | ${fmt(rate(pacedHttp.value))} parts/s | ${lat(pacedHttp.value.latencies)} | client ${(pacedHttp.clientS / pacedHttp.wallS).toFixed(2)} cores |`
	);
	notes.push(`- paced line: Server-Timing medians judge ${timing(p, 'judge')}, control rules ${timing(p, 'spc')}; the answer's p99 ${ms(pct(p.latencies, 99))}, p99.9 ${ms(pct(p.latencies, 99.9))}.`, `  - database connections during the paced line: ${pacedW.waits}`);
	const p99 = pct(p.latencies, 99);
	verdicts.push(`| bin answer p99 ≤ 10 ms at 170 parts/s (20 stations) | ${ms(p99)} (p50 ${ms(pct(p.latencies, 50))}) | ${p99 <= 10 ? 'met' : `missed by ${ms(p99 - 10)} (${(p99 / 10).toFixed(1)} × the target)`} |`);
} finally {
	ceiling.stop();
	await admin.end();
	await probe.end();
}

console.log(
	[
		`Latency columns: p50 / p95 / p99 / max of the time from sending a post to the last byte of its answer. CPU: cores used on average during the measurement (user + system time from /proc), of the 2 this machine has. Every station holds one keep-alive connection; the app and the HTTP ceiling run as separate processes beside this client. ${SECONDS} s counted per ingest figure after a 2 s warm-up.`,
		'',
		'| measurement | throughput | latency p50 / p95 / p99 / max | CPU |',
		'|---|---|---|---|',
		...rows,
		'',
		...notes,
		'',
		'| target | measured | verdict |',
		'|---|---|---|',
		...verdicts
	].join('\n')
);
process.exit(0);
