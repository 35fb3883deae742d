// Shared by the live benchmarks: a simulated line (product, lot, calibrated stations), the
// station client (node:http with keep-alive, one connection per station) and the load shapes
// (closed loop of batches, paced single-part posts), stream subscribers, percentiles and the
// CPU time of processes read from /proc. Benchmarks only: nothing here is imported by the app.
import http from 'node:http';
import fs from 'node:fs';
import { randomUUID } from 'node:crypto';
import { gauss, prng } from '../support/prng';

const pF = 1e-12;
export const FIXTURE = { inductanceH: 100e-6, strayF: 3 * pF, blockingF: 100e-9, arrangement: 'single' as const };
export const BIASES = [1, 2, 3, 4, 6, 8, 15, 25];
const partF = (v: number, k: number) => ((40 * pF) / Math.sqrt(1 + v / 0.75) + 0.3 * pF) * k;
export const resonance = (c: number) => 1 / (2 * Math.PI * Math.sqrt(FIXTURE.inductanceH * (FIXTURE.strayF + (c * FIXTURE.blockingF) / (c + FIXTURE.blockingF))));

export function pct(xs: number[], p: number): number {
	if (xs.length === 0) return Number.NaN;
	const s = Float64Array.from(xs).sort();
	return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))] ?? Number.NaN;
}
/** The largest value (Math.max(...xs) overflows the stack at a few hundred thousand values). */
export const maxOf = (xs: readonly number[]) => xs.reduce((m, x) => (x > m ? x : m), Number.NEGATIVE_INFINITY);
export const ms = (x: number) => (Number.isFinite(x) ? `${x.toFixed(1)} ms` : '–');
export const sleep = (t: number) => new Promise((r) => setTimeout(r, t));

export type Reply = { status: number; text: string; headers: http.IncomingHttpHeaders };

/** One keep-alive connection pool; `maxSockets` = how many requests may be in flight. */
export function agent(maxSockets: number) {
	return new http.Agent({ keepAlive: true, maxSockets, maxFreeSockets: maxSockets });
}

/** A request over the agent (no fetch: its per-request cost in the client is several times higher). */
export function request(a: http.Agent, url: string, method: string, headers: Record<string, string>, body?: string): Promise<Reply> {
	return new Promise((resolve, reject) => {
		const req = http.request(url, { method, agent: a, headers: body === undefined ? headers : { ...headers, 'content-length': String(Buffer.byteLength(body)) } }, (res) => {
			const chunks: Buffer[] = [];
			res.on('data', (c: Buffer) => chunks.push(c));
			res.on('end', () => resolve({ status: res.statusCode ?? 0, text: Buffer.concat(chunks).toString('utf8'), headers: res.headers }));
			res.on('error', reject);
		});
		req.on('error', reject);
		if (body !== undefined) req.write(body);
		req.end();
	});
}

async function send(base: string, path: string, body: unknown, headers: Record<string, string>) {
	const res = await fetch(base + path, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body: JSON.stringify(body) });
	if (res.status >= 300) throw new Error(`${path}: ${res.status} ${await res.text()}`);
	return res;
}

export type Line = { cookie: string; code: string; lot: string; stations: { name: string; token: string }[] };

/** A product, a lot of a million parts and `n` calibrated stations, through the public API. */
export async function setUpLine(base: string, n: number, tag = randomUUID().slice(0, 6)): Promise<Line> {
	const signIn = await send(base, '/api/v1/session', { email: process.env.BENCH_ADMIN_EMAIL, password: process.env.BENCH_ADMIN_PASSWORD }, {});
	const cookie = (signIn.headers.get('set-cookie') ?? '').split(';')[0] ?? '';
	const code = `BEN-${tag}`;
	await send(base, '/api/v1/products', { code, name: 'Bench part', plan: { points: BIASES.map((v) => ({ biasV: v, ...(v === 1 ? { minF: 20 * pF, maxF: 35 * pF } : {}) })), ratio: { lowBiasV: 1, highBiasV: 25, min: 3 } } }, { cookie });
	const lot = `LT-B-${tag}`;
	await send(base, '/api/v1/lots', { number: lot, productCode: code, quantity: 10_000_000 }, { cookie });
	const stations: Line['stations'] = [];
	for (let i = 0; i < n; i++) {
		const name = `B-${tag}-${String(i + 1).padStart(2, '0')}`;
		const st = await send(base, '/api/v1/stations', { name, fixture: FIXTURE }, { cookie });
		const token = ((await st.json()) as { token: string }).token;
		await send(base, '/api/v1/calibrations', { references: [10, 47, 100, 220].map((c) => ({ capacitanceF: c * pF, resonanceHz: resonance(c * pF) })) }, { authorization: `Bearer ${token}` });
		stations.push({ name, token });
	}
	return { cookie, code, lot, stations };
}

let serial = 0;
const rand = prng(20261202);
/**
 * One 8-point part with bandwidths and leakage from a process in control: independent normal
 * scatter of 0.3 % in size and 0.1 % reading noise per point, no drift (a line that runs as it
 * should). The control rules still fire now and then (each rule's false-alarm rate), and those
 * posts open or extend alarms. The reading noise matters: with a pure scale factor the ratio
 * C1/C25 would not vary, its chart would freeze limits of zero width, and every float rounding
 * would break a rule.
 */
export function unit(lot: string, prefix = '') {
	serial++;
	const k = 1 + 0.003 * gauss(rand);
	return {
		serial: `${lot}-${prefix}${serial}`,
		testedAt: new Date().toISOString(),
		leakageA: 2e-10,
		points: BIASES.map((v) => {
			const f = resonance(partF(v, k) * (1 + 0.001 * gauss(rand)));
			return { biasV: v, resonanceHz: f, bandwidthHz: f / 250 };
		})
	};
}

export type PostResult = { ms: number; parts: number; status: number; serials: string[]; t0: number; timing: Record<string, number>; retryAfterS: number };

/** Posts `n` parts as one batch from a station; the latency is to the last byte of the answer. */
export async function postParts(a: http.Agent, url: string, token: string, lot: string, n: number): Promise<PostResult> {
	const units = Array.from({ length: n }, () => unit(lot));
	const body = JSON.stringify({ lot, units });
	const t0 = performance.now();
	const res = await request(a, url, 'POST', { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() }, body);
	const t1 = performance.now();
	// 503 (database busy or away) and 429 are answers a station must expect: it waits Retry-After
	// and sends again. The load counts them apart; anything else is a broken benchmark.
	if (res.status === 503 || res.status === 429) return { ms: t1 - t0, parts: 0, status: res.status, serials: [], t0, timing: {}, retryAfterS: Number(res.headers['retry-after'] ?? 1) };
	if (res.status !== 201) throw new Error(`post: ${res.status} ${res.text.slice(0, 300)}`);
	const timing: Record<string, number> = {};
	for (const m of String(res.headers['server-timing'] ?? '').matchAll(/(\w+);dur=([\d.]+)/g)) timing[m[1] ?? ''] = Number(m[2]);
	return { ms: t1 - t0, parts: n, status: res.status, serials: units.map((u) => u.serial), t0, timing, retryAfterS: 0 };
}

export type LoadResult = { parts: number; posts: number; refused: number; seconds: number; latencies: number[]; timings: Record<string, number[]> };

/** Accepted posts give the latencies; refused ones (503/429) are only counted. */
function collect(all: PostResult[], seconds: number): LoadResult {
	const results = all.filter((r) => r.status === 201);
	const timings: Record<string, number[]> = {};
	for (const r of results) for (const [k, v] of Object.entries(r.timing)) (timings[k] ??= []).push(v);
	return { parts: results.reduce((s, r) => s + r.parts, 0), posts: results.length, refused: all.length - results.length, seconds, latencies: results.map((r) => r.ms), timings };
}

/** "(3 refused with 503/429)" or nothing. */
export const refusals = (r: { refused: number }) => (r.refused ? ` (${r.refused} posts refused with 503/429, retried after Retry-After)` : '');

/**
 * Closed loop: every station posts a batch, waits for the answer, posts the next, for
 * `seconds` (after `warmS` of the same load that is not counted).
 */
export async function closedLoop(o: { url: string; tokens: string[]; lot: string; batch: number; seconds: number; warmS?: number }): Promise<LoadResult> {
	const a = agent(o.tokens.length);
	const results: PostResult[] = [];
	const start = performance.now();
	const countFrom = start + (o.warmS ?? 0) * 1000;
	const until = countFrom + o.seconds * 1000;
	await Promise.all(
		o.tokens.map(async (token) => {
			while (performance.now() < until) {
				const r = await postParts(a, o.url, token, o.lot, o.batch);
				if (r.t0 >= countFrom && r.t0 + r.ms <= until) results.push(r);
				if (r.retryAfterS) await sleep(Math.min(5, r.retryAfterS) * 1000);
			}
		})
	);
	a.destroy();
	return collect(results, o.seconds);
}

/**
 * Paced: each station posts one part every 1/rate s on a fixed schedule, one post at a time as a
 * station does (it waits for the bin before handling the next part). A post that comes back
 * after its successor's slot makes the next one go at once (counted in `late`), so a slow
 * server shows as a lower rate, not as a growing queue in the client. `onPost` sees every post.
 */
export async function paced(o: { url: string; tokens: string[]; lot: string; perStationHz: number; seconds: number; warmS?: number; onPost?: (r: PostResult) => void }): Promise<LoadResult & { late: number }> {
	const a = agent(o.tokens.length);
	const results: PostResult[] = [];
	const period = 1000 / o.perStationHz;
	const start = performance.now();
	const countFrom = start + (o.warmS ?? 0) * 1000;
	const until = countFrom + o.seconds * 1000;
	let late = 0;
	await Promise.all(
		o.tokens.map(async (token, i) => {
			// Stations start spread over one period, as a line's stations are not in step.
			let next = start + (period * i) / o.tokens.length;
			while (next < until) {
				const wait = next - performance.now();
				if (wait > 0) await sleep(wait);
				else if (next >= countFrom) late++;
				const r = await postParts(a, o.url, token, o.lot, 1);
				o.onPost?.(r);
				if (r.t0 >= countFrom) results.push(r);
				if (r.retryAfterS) await sleep(Math.min(5, r.retryAfterS) * 1000);
				next = Math.max(next + period, performance.now() - period);
			}
		})
	);
	a.destroy();
	return { ...collect(results, o.seconds), late };
}

/** Opens a stream and records when each unit event arrives (by serial). */
export function subscribe(base: string, cookie: string, query: string, seen: Map<string, number[]> | null, ready: () => void) {
	const controller = new AbortController();
	let events = 0;
	void (async () => {
		try {
			const res = await fetch(`${base}/api/v1/stream?${query}`, { headers: { cookie }, signal: controller.signal });
			const reader = res.body?.getReader();
			if (!reader) return;
			const decoder = new TextDecoder();
			let text = '';
			ready();
			for (;;) {
				const { value, done } = await reader.read();
				if (done) break;
				text += decoder.decode(value, { stream: true });
				let end;
				while ((end = text.indexOf('\n\n')) >= 0) {
					const block = text.slice(0, end);
					text = text.slice(end + 2);
					if (!block.includes('event: unit')) continue;
					events++;
					if (!seen) continue;
					const data = block.split('\n').find((l) => l.startsWith('data: '));
					const s = data ? (JSON.parse(data.slice(6)) as { serial: string }).serial : null;
					if (s) seen.set(s, [...(seen.get(s) ?? []), performance.now()]);
				}
			}
		} catch {
			// aborted at the end of the run
		}
	})();
	return { stop: () => controller.abort(), events: () => events };
}

/** CPU seconds (user + system) used so far by a process, and by its reaped children when asked. */
export function cpuSeconds(pid: number, withReaped = false): number {
	try {
		const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8');
		const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
		// Fields 14-17 of proc(5) (utime stime cutime cstime), here 0-based after the name.
		const ticks = Number(f[11]) + Number(f[12]) + (withReaped ? Number(f[13]) + Number(f[14]) : 0);
		return ticks / 100;
	} catch {
		return 0;
	}
}

/** CPU seconds of the PostgreSQL server: the postmaster, its live backends and those that ended. */
export function postgresCpuSeconds(postmasterPid: number): number {
	let total = cpuSeconds(postmasterPid, true);
	for (const d of fs.readdirSync('/proc')) {
		if (!/^\d+$/.test(d)) continue;
		try {
			const stat = fs.readFileSync(`/proc/${d}/stat`, 'utf8');
			const ppid = Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]);
			if (ppid === postmasterPid) total += cpuSeconds(Number(d));
		} catch {
			// the process ended meanwhile
		}
	}
	return total;
}

/** Measures the CPU of the app, PostgreSQL and this client over an async section. */
export async function withCpu<T>(fn: () => Promise<T>): Promise<{ value: T; wallS: number; appS: number; pgS: number; clientS: number }> {
	const appPid = Number(process.env.BENCH_APP_PID ?? 0);
	const pgPid = Number(process.env.BENCH_PG_PID ?? 0);
	const read = () => ({ app: appPid ? cpuSeconds(appPid) : 0, pg: pgPid ? postgresCpuSeconds(pgPid) : 0, client: process.cpuUsage() });
	const a = read();
	const t0 = performance.now();
	const value = await fn();
	const wallS = (performance.now() - t0) / 1000;
	const b = read();
	const cu = process.cpuUsage(a.client);
	return { value, wallS, appS: b.app - a.app, pgS: b.pg - a.pg, clientS: (cu.user + cu.system) / 1e6 };
}

/** "app 1.3 + db 0.5 + client 0.2 of 2 cores" from a withCpu measurement. */
export function cpuShare(c: { wallS: number; appS: number; pgS: number; clientS: number }, ownServer = 'app'): string {
	const f = (x: number) => (x / c.wallS).toFixed(2);
	return `${ownServer} ${f(c.appS)} + postgres ${f(c.pgS)} + client ${f(c.clientS)} cores`;
}

/**
 * Samples what the database's client backends are doing every `everyMs` (pg_stat_activity, and
 * for a backend waiting on a lock the lock's kind and table from pg_locks) until stopped; the
 * summary says where the time of the connections went: running, waiting for the app (idle in
 * transaction = a round trip), waiting for a lock, for the WAL flush of a commit, etc.
 */
export function waitSampler(client: { query: (sql: string) => Promise<{ rows: { what: string }[] }> }, everyMs = 100) {
	const counts = new Map<string, number>();
	let samples = 0;
	let stopped = false;
	const done = (async () => {
		while (!stopped) {
			const r = await client.query(
				`SELECT a.state || coalesce(' / ' || a.wait_event_type || ':' || a.wait_event, ' / running') ||
				   coalesce(' on ' || l.locktype || coalesce(' of ' || l.relation::regclass::text, ''), '') ||
				   CASE WHEN a.state = 'active' THEN ' — ' || left(regexp_replace(a.query, '\\s+', ' ', 'g'), 70) ELSE '' END AS what
				 FROM pg_stat_activity a LEFT JOIN pg_locks l ON l.pid = a.pid AND NOT l.granted
				 WHERE a.datname = current_database() AND a.pid <> pg_backend_pid() AND a.backend_type = 'client backend' AND a.state <> 'idle'`
			);
			samples++;
			for (const row of r.rows) counts.set(row.what, (counts.get(row.what) ?? 0) + 1);
			await sleep(everyMs);
		}
	})();
	return {
		/** The commonest states: share of (backend × sample), plus busy backends on average. */
		stop: async (top = 6) => {
			stopped = true;
			await done;
			const total = [...counts.values()].reduce((a, b) => a + b, 0);
			const lines = [...counts].sort((a, b) => b[1] - a[1]).slice(0, top).map(([k, n]) => `${((100 * n) / Math.max(1, total)).toFixed(0)} % ${k}`);
			return { busyBackends: total / Math.max(1, samples), lines };
		}
	};
}
