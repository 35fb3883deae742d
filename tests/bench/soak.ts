// Benchmark (not a test): the soak. A steady line (20 stations posting single parts at
// BENCH_SOAK_RATE parts/s in total, 20 stream subscribers) for BENCH_SOAK_MIN minutes against the
// built server at BENCH_URL; the server's RSS (/proc/<pid>/status VmRSS) and heap (written by
// heap-probe.cjs, preloaded into the server) every 30 s. Prints markdown.
import fs from 'node:fs';
import { maxOf, ms, paced, pct, setUpLine, sleep, subscribe, type PostResult } from './line';

const base = process.env.BENCH_URL ?? '';
if (!base) throw new Error('BENCH_URL is not set: run npm run bench -- --soak <minutes>');
const minutes = Number(process.env.BENCH_SOAK_MIN ?? 30);
const rate = Number(process.env.BENCH_SOAK_RATE ?? 170);
const pid = Number(process.env.BENCH_APP_PID ?? 0);
const heapFile = process.env.BENCH_HEAP_FILE ?? '';
const SAMPLE_S = 30;
const WARM_S = 120;
const STATIONS = 20;
const SUBSCRIBERS = 20;

const vmRss = () => {
	const m = /VmRSS:\s+(\d+) kB/.exec(fs.readFileSync(`/proc/${pid}/status`, 'utf8'));
	return m ? Number(m[1]) * 1024 : Number.NaN;
};
const lastHeap = (): { heapUsed: number; heapTotal: number } | null => {
	if (!heapFile || !fs.existsSync(heapFile)) return null;
	const lines = fs.readFileSync(heapFile, 'utf8').trim().split('\n');
	const last = lines[lines.length - 1];
	return last ? (JSON.parse(last) as { heapUsed: number; heapTotal: number }) : null;
};
const mib = (b: number) => (b / 2 ** 20).toFixed(1);

const line = await setUpLine(base, STATIONS);
let ready = 0;
const subs = Array.from({ length: SUBSCRIBERS }, () => subscribe(base, line.cookie, `lot=${line.lot}`, null, () => ready++));
while (ready < SUBSCRIBERS) await sleep(20);

type Sample = { t: number; rss: number; heapUsed: number; heapTotal: number; parts: number; p99: number; events: number };
const samples: Sample[] = [];
let window: PostResult[] = [];
let parts = 0;
const t0 = performance.now();
const sampler = setInterval(() => {
	const h = lastHeap();
	const lat = window.map((r) => r.ms);
	window = [];
	samples.push({ t: (performance.now() - t0) / 1000, rss: vmRss(), heapUsed: h?.heapUsed ?? Number.NaN, heapTotal: h?.heapTotal ?? Number.NaN, parts, p99: pct(lat, 99), events: subs.reduce((s, x) => s + x.events(), 0) });
}, SAMPLE_S * 1000);
const run = await paced({
	url: `${base}/api/v1/results`,
	tokens: line.stations.map((s) => s.token),
	lot: line.lot,
	perStationHz: rate / STATIONS,
	seconds: minutes * 60,
	onPost: (r) => {
		parts += r.parts;
		window.push(r);
	}
});
clearInterval(sampler);
await sleep(1000);
subs.forEach((s) => s.stop());

const stable = samples.find((s) => s.t >= WARM_S) ?? samples[0];
const end = samples[samples.length - 1];
const growth = (a?: number, b?: number) => (a && b ? (100 * (b - a)) / a : Number.NaN);
const rssGrowth = growth(stable?.rss, end?.rss);
const heapGrowth = growth(stable?.heapUsed, end?.heapUsed);
// Single samples ride the garbage collector's sawtooth; the medians of the first and the last
// five minutes after the warm-up show the trend.
const median = (xs: number[]) => pct(xs, 50);
const after = samples.filter((s) => s.t >= WARM_S);
const span = Math.min(10, Math.floor(after.length / 2));
const firstRss = median(after.slice(0, span).map((s) => s.rss));
const lastRss = median(after.slice(-span).map((s) => s.rss));
const trend = growth(firstRss, lastRss);
const verdict = (g: number) => (!Number.isFinite(g) ? 'no samples' : g <= 10 ? 'met' : `missed by ${(g - 10).toFixed(1)} points`);
const out = [
	`## Soak: ${minutes} min, ${rate} parts/s from ${STATIONS} stations (single-part posts), ${SUBSCRIBERS} stream subscribers`,
	'',
	`Posted ${run.posts} parts in ${(run.seconds / 60).toFixed(0)} min (${(run.parts / run.seconds).toFixed(0)} parts/s), posts that could not start on schedule (the previous answer came too late): ${run.late}. Bin answer over the whole soak: p50 ${ms(pct(run.latencies, 50))}, p99 ${ms(pct(run.latencies, 99))}, max ${ms(maxOf(run.latencies))}.`,
	'',
	'| minute | server RSS (MiB) | heap used (MiB) | heap total (MiB) | parts posted | unit events received (all subscribers) | bin answer p99 in the last 30 s |',
	'|---|---|---|---|---|---|---|',
	...samples.map((s) => `| ${(s.t / 60).toFixed(1)} | ${mib(s.rss)} | ${mib(s.heapUsed)} | ${mib(s.heapTotal)} | ${s.parts} | ${s.events} | ${ms(s.p99)} |`),
	'',
	`Growth from the first sample after the ${WARM_S / 60}-minute warm-up (minute ${((stable?.t ?? 0) / 60).toFixed(1)}) to the end: RSS ${rssGrowth.toFixed(1)} % (${mib(stable?.rss ?? 0)} → ${mib(end?.rss ?? 0)} MiB), heap used ${heapGrowth.toFixed(1)} % (${mib(stable?.heapUsed ?? 0)} → ${mib(end?.heapUsed ?? 0)} MiB): ${verdict(rssGrowth)} (target ≤ 10 %).`,
	'',
	`Median RSS of the first ${span} samples after the warm-up ${mib(firstRss)} MiB, of the last ${span} ${mib(lastRss)} MiB: ${trend.toFixed(1)} %, ${verdict(trend)}.${minutes < 10 ? ' A short soak says little: run `npm run bench -- --soak 30`.' : ''}`
];
console.log(out.join('\n'));
process.exit(0);
