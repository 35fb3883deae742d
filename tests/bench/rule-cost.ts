// Benchmark (not a test): what rule evaluation adds to a station's post, with 1 000 000 parts
// stored. One station posts single 8-point parts alternately to two products that differ only in
// their rules: every rule on (WE1–4, Nelson 1–8, EWMA, CUSUM±) against none. Both are charted
// the same way (9 charts each, points stored), so the difference in the bin-answer time is the
// rules' share: the stepping itself and the larger rule state written back. Against the built
// server at BENCH_URL with its database at BENCH_DATABASE_URL (npm run bench sets both).
import { randomUUID } from 'node:crypto';
import pg from 'pg';
import { BIASES, FIXTURE, resonance, unit } from './line';

const base = process.env.BENCH_URL ?? '';
if (!base) throw new Error('BENCH_URL is not set: run npm run bench');
const POSTS = Number(process.env.BENCH_RULE_POSTS ?? 300);
const FILL = Number(process.env.BENCH_RULE_FILL ?? 1_000_000);
// Points added to each chart: far past any rule window (15 points), so the history is long.
const CHART_FILL = Number(process.env.BENCH_RULE_CHART_FILL ?? 100_000);
const pF = 1e-12;
const ALL_RULES = ['WE1', 'WE2', 'WE3', 'WE4', 'N1', 'N2', 'N3', 'N4', 'N5', 'N6', 'N7', 'N8', 'EWMA', 'CUSUM+', 'CUSUM-'];

function pct(xs: number[], p: number): number {
	const s = [...xs].sort((a, b) => a - b);
	return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))] ?? Number.NaN;
}
const ms = (x: number) => `${x.toFixed(2)} ms`;

async function call(path: string, body: unknown, headers: Record<string, string>) {
	const res = await fetch(base + path, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body: JSON.stringify(body) });
	if (res.status >= 300) throw new Error(`${path}: ${res.status} ${await res.text()}`);
	return res;
}

const plan = (rules: string[]) => ({
	points: BIASES.map((v) => ({ biasV: v, ...(v === 1 ? { minF: 20 * pF, maxF: 35 * pF } : {}) })),
	ratio: { lowBiasV: 1, highBiasV: 25, min: 3 },
	spc: { rules, baselineParts: 30 }
});

async function setup() {
	const signIn = await call('/api/v1/session', { email: process.env.BENCH_ADMIN_EMAIL, password: process.env.BENCH_ADMIN_PASSWORD }, {});
	const cookie = (signIn.headers.get('set-cookie') ?? '').split(';')[0] ?? '';
	const tag = randomUUID().slice(0, 6);
	const st = await call('/api/v1/stations', { name: `R-${tag}`, fixture: FIXTURE }, { cookie });
	const token = ((await st.json()) as { token: string }).token;
	await call('/api/v1/calibrations', { references: [10, 47, 100, 220].map((c) => ({ capacitanceF: c * pF, resonanceHz: resonance(c * pF) })) }, { authorization: `Bearer ${token}` });
	const lots: Record<'all' | 'defaults' | 'none', string> = { all: `LT-RA-${tag}`, defaults: `LT-RD-${tag}`, none: `LT-RN-${tag}` };
	for (const [which, rules] of [['all', ALL_RULES], ['defaults', ['WE1', 'WE4']], ['none', []]] as const) {
		const code = `RULE-${which}-${tag}`;
		await call('/api/v1/products', { code, name: `Rule cost (${which})`, plan: plan([...rules]) }, { cookie });
		await call('/api/v1/lots', { number: lots[which], productCode: code, quantity: 10_000_000 }, { cookie });
	}
	return { token, lots };
}

async function post(token: string, lot: string) {
	const body = JSON.stringify({ lot, units: [unit(lot)] });
	const t0 = performance.now();
	const res = await fetch(`${base}/api/v1/results`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() },
		body
	});
	const t1 = performance.now();
	if (res.status !== 201) throw new Error(`results: ${res.status} ${await res.text()}`);
	const timing = res.headers.get('server-timing') ?? '';
	const spc = /spc;dur=([\d.]+)/.exec(timing);
	await res.arrayBuffer();
	return { ms: t1 - t0, spcMs: spc ? Number(spc[1]) : Number.NaN, alarmed: /alarms;desc="?([1-9])/.test(timing) };
}

/** Parts and chart points straight in SQL for both lots: what a long life of the station leaves. */
async function fill(lots: string[]) {
	const client = new pg.Client({ connectionString: process.env.BENCH_DATABASE_URL });
	await client.connect();
	const t0 = performance.now();
	try {
		for (const lot of lots) {
			const per = Math.round(FILL / lots.length);
			await client.query(
				`INSERT INTO units (lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, bin, pass, bias_v, capacitance_f)
				 SELECT u.lot_id, u.station_id, u.plan_version_id, u.calibration_id, u.serial || '-f' || g, 'production', u.tested_at, u.bin, u.pass, u.bias_v, u.capacitance_f
				 FROM (SELECT * FROM units WHERE lot_id = (SELECT id FROM lots WHERE number = $1) ORDER BY id LIMIT 1) u, generate_series(1, $2) g`,
				[lot, per]
			);
			const charts = await client.query<{ id: string; point_count: number }>(
				`SELECT c.id, c.point_count FROM charts c WHERE c.product_id = (SELECT product_id FROM lots WHERE number = $1)`,
				[lot]
			);
			for (const c of charts.rows) {
				await client.query(
					`INSERT INTO chart_points (chart_id, seq, unit_id, value, at, limits_version)
					 SELECT $1, $2 + g, (SELECT min(id) FROM units), 26.5, now(), 1 FROM generate_series(0, $3 - 1) g`,
					[c.id, c.point_count, CHART_FILL]
				);
				await client.query('UPDATE charts SET point_count = point_count + $2 WHERE id = $1', [c.id, CHART_FILL]);
			}
		}
		await client.query('ANALYZE units; ANALYZE chart_points;');
		return (performance.now() - t0) / 1000;
	} finally {
		await client.end();
	}
}

const { token, lots } = await setup();
// Past the 30-part baselines, so every chart is active and every rule is stepping.
for (let i = 0; i < 40; i++) {
	await post(token, lots.all);
	await post(token, lots.defaults);
	await post(token, lots.none);
}
const seconds = await fill([lots.all, lots.defaults, lots.none]);
type Answer = { ms: number; spcMs: number; alarmed: boolean };
const all: Answer[] = [];
const defaults: Answer[] = [];
const none: Answer[] = [];
for (let i = 0; i < 20; i++) await post(token, [lots.all, lots.defaults, lots.none][i % 3] ?? lots.none); // warm after the fill
for (let i = 0; i < POSTS; i++) {
	// In turn, so machine noise falls on all three alike.
	all.push(await post(token, lots.all));
	defaults.push(await post(token, lots.defaults));
	none.push(await post(token, lots.none));
}
const med = (xs: { ms: number }[]) => pct(xs.map((x) => x.ms), 50);
const added = med(all) - med(none);
const quiet = all.filter((x) => !x.alarmed);
const addedQuiet = med(quiet) - med(none);
const addedDefaults = med(defaults) - med(none);
const quietDefaults = defaults.filter((x) => !x.alarmed);
const addedQuietDefaults = med(quietDefaults) - med(none);
console.log(`${FILL.toLocaleString('en-US')} more parts stored and ${CHART_FILL.toLocaleString('en-US')} more points on each chart (filled in SQL in ${seconds.toFixed(0)} s), then ${POSTS} single 8-point posts to each product, alternating; 9 charts per product.`);
console.log('');
console.log('| product | bin answer p50 | p95 | rule stepping in the server (Server-Timing spc) p50 |');
console.log('| --- | --- | --- | --- |');
console.log(`| every rule on (15) | ${ms(med(all))} | ${ms(pct(all.map((x) => x.ms), 95))} | ${ms(pct(all.map((x) => x.spcMs), 50))} |`);
console.log(`| the default rules (WE1, WE4) | ${ms(med(defaults))} | ${ms(pct(defaults.map((x) => x.ms), 95))} | ${ms(pct(defaults.map((x) => x.spcMs), 50))} |`);
console.log(`| no rule | ${ms(med(none))} | ${ms(pct(none.map((x) => x.ms), 95))} | ${ms(pct(none.map((x) => x.spcMs), 50))} |`);
console.log('');
console.log(`Rule evaluation adds **${ms(added)}** to the median post (target < 2 ms: ${added < 2 ? 'met' : `missed by ${ms(added - 2)}`}).`);
console.log(`The default rules add **${ms(addedDefaults)}** (${defaults.length - quietDefaults.length} of ${defaults.length} posts raised an alarm; over the others ${ms(addedQuietDefaults)}).`);
console.log(`${all.length - quiet.length} of ${all.length} posts with every rule on broke a rule and opened or extended an alarm (a statement each, plus the alarm's events); over the other ${quiet.length} posts the rules add ${ms(addedQuiet)} to the median.`);
