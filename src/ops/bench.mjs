// @ts-check
// `npm run bench`: the benchmarks, with a markdown report in <data dir>/bench/report.md.
// Speed targets are measured here, never in unit tests. Figures from a shared 2-core machine
// are noisy: the report carries the machine and its load beside each run, and the live figures
// are measured side by side in one run (ingest beside its HTTP and storage ceilings).
//
//   npm run bench                      core, control rules, ingest + ceilings, stream, queries at 1 M parts
//   npm run bench -- --only ingest     only some parts: core, spc, ingest, rules, live (comma-separated)
//   npm run bench -- --keep           keep the database (and the cluster running) afterwards, to
//                                      look into a slow query with EXPLAIN; drop it by hand
//   npm run bench -- --soak 30         only the soak, for that many minutes (its own data folder
//                                      .data/bench/soak; report soak/report.md, which the next full
//                                      run's report quotes)
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { capture, createDatabase, dataDir, dropDatabase, ensureBuild, ensureCluster, ensureDependencies, fail, freePort, root, say, startApp, stopChild, waitForHttp } from './lib.mjs';

const args = process.argv.slice(2);
const flag = (/** @type {string} */ name) => {
	const i = args.indexOf(name);
	return i >= 0 ? (args[i + 1] ?? '') : null;
};
const soakArg = flag('--soak');
const soakMin = soakArg === null ? 0 : Number(soakArg);
if (soakArg !== null && !(soakMin > 0)) fail('--soak takes the minutes, e.g. --soak 30');
const keep = args.includes('--keep');
const only = (flag('--only') ?? 'core,spc,ingest,rules,live').split(',');
if (soakMin) only.length = 0;

ensureDependencies();
const tsx = path.join(root, 'node_modules', '.bin', 'tsx');
const started = Date.now();
const benchDir = path.join(dataDir(), 'bench');

function machine() {
	const pg = capture('/bin/sh', ['-c', 'ls /usr/lib/postgresql 2>/dev/null | sort -n | tail -1']).out.trim();
	const pgVersion = pg ? capture(path.join('/usr/lib/postgresql', pg, 'bin', 'postgres'), ['--version']).out.trim() : 'unknown';
	return [
		`- when: ${new Date().toISOString()}`,
		`- machine: ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'unknown CPU'}, ${(os.totalmem() / 2 ** 30).toFixed(1)} GiB RAM, ${os.type()} ${os.release()}; shared with other work, so figures are noisy`,
		`- Node ${process.version}; ${pgVersion} (private cluster, fsync on, shared_buffers 256MB)`,
		`- load average at start: ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}`
	];
}

const out = ['# Biasline benchmarks', '', ...machine(), ''];
let failed = false;

/** Runs a benchmark script with tsx, echoing its markdown and keeping it for the report. */
function bench(/** @type {string} */ title, /** @type {string} */ file, /** @type {string} */ command, /** @type {NodeJS.ProcessEnv} */ env = process.env) {
	say(`${title} (${file})…`);
	const t0 = Date.now();
	const r = spawnSync(tsx, [file], { cwd: root, encoding: 'utf8', env, maxBuffer: 64 * 2 ** 20 });
	process.stdout.write(r.stdout);
	if (r.status !== 0) {
		failed = true;
		process.stderr.write(r.stderr);
	}
	out.push(`## ${title}`, '', `Command: ${command} (${((Date.now() - t0) / 1000).toFixed(0)} s)`, '', r.stdout.trim() || `FAILED: ${r.stderr.trim().split('\n').slice(-5).join(' / ')}`, '');
}

if (only.includes('core')) bench('Measurement core: convert + fit + judge, matched sets', 'tests/bench/core.ts', '`npx tsx tests/bench/core.ts`');
if (only.includes('spc')) bench('Control rules: one step of a chart with every rule enabled', 'tests/bench/spc-step.ts', '`npx tsx tests/bench/spc-step.ts`');

if (only.includes('ingest') || only.includes('live') || only.includes('rules') || soakMin) {
	// The live server: its own throwaway database on the bench's cluster, the built app, no demo.
	process.env.BIASLINE_DATA_DIR = soakMin ? path.join(benchDir, 'soak') : benchDir;
	fs.mkdirSync(process.env.BIASLINE_DATA_DIR, { recursive: true });
	const dir = process.env.BIASLINE_DATA_DIR;
	// Built first: a failed build exits before a cluster is started that nobody would stop.
	const buildDir = path.join(dir, 'build');
	ensureBuild(buildDir);
	const cluster = await ensureCluster();
	const dbName = `biasline_bench_${process.pid}`;
	await createDatabase(cluster.url('postgres'), dbName);
	const port = await freePort();
	const admin = { email: 'bench@corvane.example', password: randomBytes(12).toString('base64url') };
	const heapFile = path.join(dir, 'heap.jsonl');
	fs.rmSync(heapFile, { force: true });
	const app = startApp({
		buildDir,
		port,
		logFile: path.join(dir, 'server.log'),
		env: {
			...process.env,
			DATABASE_URL: cluster.url(dbName),
			BIASLINE_SESSION_KEY: randomBytes(32).toString('base64url'),
			BIASLINE_DEMO: '0',
			BIASLINE_ADMIN_EMAIL: admin.email,
			BIASLINE_ADMIN_PASSWORD: admin.password,
			SHUTDOWN_TIMEOUT: '1',
			// Benchmarks only: the server's heap, written to a file by a preloaded probe.
			NODE_OPTIONS: `${process.env.NODE_OPTIONS ?? ''} --require ${path.join(root, 'tests', 'bench', 'heap-probe.cjs')}`.trim(),
			BENCH_HEAP_FILE: heapFile,
			BENCH_HEAP_MS: '10000'
		}
	});
	const stopAll = async () => {
		await stopChild(app);
		if (keep) {
			say(`kept: database ${dbName} on the cluster in ${cluster.dir} (port ${cluster.port}; password in ${path.join(dir, 'pg-password')})`);
			return;
		}
		await dropDatabase(cluster.url('postgres'), dbName).catch(() => {});
		if (cluster.started) cluster.stop();
	};
	process.once('SIGINT', () => void stopAll().then(() => process.exit(130)));
	try {
		await waitForHttp(`http://127.0.0.1:${port}/login`);
		const postmaster = Number(fs.readFileSync(path.join(cluster.dir, 'postmaster.pid'), 'utf8').split('\n')[0]);
		const env = {
			...process.env,
			BENCH_URL: `http://127.0.0.1:${port}`,
			BENCH_DATABASE_URL: cluster.url(dbName),
			BENCH_ADMIN_EMAIL: admin.email,
			BENCH_ADMIN_PASSWORD: admin.password,
			BENCH_APP_PID: String(app.pid),
			BENCH_PG_PID: String(postmaster),
			BENCH_HEAP_FILE: heapFile
		};
		const onServer = '`npm run bench` (the app built and started on a throwaway database of the private cluster';
		if (only.includes('ingest')) bench('Ingest beside its ceilings', 'tests/bench/ingest.ts', `${onServer}; \`npx tsx tests/bench/ingest.ts\` with BENCH_URL, BENCH_DATABASE_URL)`, env);
		if (only.includes('rules')) bench('Rule cost inside a post at 1 M parts (every rule against none)', 'tests/bench/rule-cost.ts', `${onServer}; \`npx tsx tests/bench/rule-cost.ts\` with BENCH_URL, BENCH_DATABASE_URL)`, env);
		if (only.includes('live')) bench('Live server: bin answers, stream, control rules and queries at 1 M parts', 'tests/bench/live.ts', `${onServer}; \`npx tsx tests/bench/live.ts\` with BENCH_URL, BENCH_DATABASE_URL)`, env);
		if (soakMin) bench(`Soak (${soakMin} min)`, 'tests/bench/soak.ts', `\`npm run bench -- --soak ${soakMin}\` (\`npx tsx tests/bench/soak.ts\` on the built app)`, { ...env, BENCH_SOAK_MIN: String(soakMin) });
	} finally {
		await stopAll();
	}
}

if (!soakMin) {
	const soakReport = path.join(benchDir, 'soak', 'report.md');
	if (fs.existsSync(soakReport)) {
		const text = fs.readFileSync(soakReport, 'utf8');
		out.push('## The latest soak (a separate run: `npm run bench -- --soak 30`)', '', ...text.split('\n').filter((l) => !l.startsWith('# ')).map((l) => l.replace(/^## /, '### ')), '');
	}
}
out.push(`- load average at the end: ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}; the whole run took ${((Date.now() - started) / 60000).toFixed(1)} min`, '');
const reportDir = soakMin ? path.join(benchDir, 'soak') : benchDir;
fs.mkdirSync(reportDir, { recursive: true });
fs.writeFileSync(path.join(reportDir, 'report.md'), out.join('\n') + '\n');
say(`report: ${path.relative(root, path.join(reportDir, 'report.md'))}`);
process.exit(failed ? 1 : 0);
