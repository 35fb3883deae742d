// @ts-check
// `npm run bench`: the benchmarks, with a markdown report in <data dir>/bench/report.md.
// Speed targets are measured here, never in unit tests. Figures from a shared 2-core machine
// are noisy: the report carries the machine and its load beside each run.
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { createDatabase, dataDir, dropDatabase, ensureBuild, ensureCluster, ensureDependencies, freePort, root, say, startApp, stopChild, waitForHttp } from './lib.mjs';

ensureDependencies();
const tsx = path.join(root, 'node_modules', '.bin', 'tsx');
const benches = [
	{ title: 'Measurement core: convert + fit + judge, matched sets', file: 'tests/bench/core.ts' },
	{ title: 'Control rules: one step of a chart with every rule enabled', file: 'tests/bench/spc-step.ts' }
];
const out = [
	'# Biasline benchmarks',
	'',
	`- when: ${new Date().toISOString()}`,
	`- machine: ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'unknown CPU'}, ${Math.round(os.totalmem() / 2 ** 30)} GiB, Node ${process.version}`,
	`- load average at start: ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}`,
	''
];
let failed = false;
for (const b of benches) {
	say(`${b.title} (${b.file})…`);
	const r = spawnSync(tsx, [b.file], { cwd: root, encoding: 'utf8' });
	process.stdout.write(r.stdout);
	if (r.status !== 0) {
		failed = true;
		process.stderr.write(r.stderr);
	}
	out.push(`## ${b.title}`, '', `Command: \`npx tsx ${b.file}\``, '', r.stdout.trim(), '');
}
// The live server: its own throwaway database on the bench's cluster, the built app, no demo.
process.env.BIASLINE_DATA_DIR = path.join(dataDir(), 'bench');
fs.mkdirSync(process.env.BIASLINE_DATA_DIR, { recursive: true });
const cluster = await ensureCluster();
const dbName = `biasline_bench_${process.pid}`;
await createDatabase(cluster.url('postgres'), dbName);
const buildDir = path.join(process.env.BIASLINE_DATA_DIR, 'build');
ensureBuild(buildDir);
const port = await freePort();
const admin = { email: 'bench@corvane.example', password: randomBytes(12).toString('base64url') };
const app = startApp({
	buildDir,
	port,
	logFile: path.join(process.env.BIASLINE_DATA_DIR, 'server.log'),
	env: {
		...process.env,
		DATABASE_URL: cluster.url(dbName),
		BIASLINE_SESSION_KEY: randomBytes(32).toString('base64url'),
		BIASLINE_DEMO: '0',
		BIASLINE_ADMIN_EMAIL: admin.email,
		BIASLINE_ADMIN_PASSWORD: admin.password,
		SHUTDOWN_TIMEOUT: '1'
	}
});
try {
	await waitForHttp(`http://127.0.0.1:${port}/login`);
	say('live server: bin answers and stream latency (tests/bench/live.ts)…');
	const r = spawnSync(tsx, ['tests/bench/live.ts'], {
		cwd: root,
		encoding: 'utf8',
		env: { ...process.env, BENCH_URL: `http://127.0.0.1:${port}`, BENCH_DATABASE_URL: cluster.url(dbName), BENCH_ADMIN_EMAIL: admin.email, BENCH_ADMIN_PASSWORD: admin.password }
	});
	process.stdout.write(r.stdout);
	if (r.status !== 0) {
		failed = true;
		process.stderr.write(r.stderr);
	}
	out.push(`Command: \`npm run bench\` (server built and started on a throwaway database; \`npx tsx tests/bench/live.ts\` with BENCH_URL)`, '', r.stdout.trim(), '');
} finally {
	await stopChild(app);
	await dropDatabase(cluster.url('postgres'), dbName).catch(() => {});
	if (cluster.started) cluster.stop();
}

const dir = process.env.BIASLINE_DATA_DIR;
fs.writeFileSync(path.join(dir, 'report.md'), out.join('\n') + '\n');
say(`report: ${path.relative(root, path.join(dir, 'report.md'))}`);
process.exit(failed ? 1 : 0);
