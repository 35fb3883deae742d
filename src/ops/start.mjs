// @ts-check
// `npm start`: everything from a fresh clone to a running product (see README).
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { createDatabase, dataDir, ensureBuild, ensureCluster, ensureDependencies, freePort, root, say, sessionKey, waitForHttp } from './lib.mjs';

const DEMO_ADMIN = { email: 'admin@corvane.example', password: 'biasline-admin' };

ensureDependencies();
const demo = (process.env.BIASLINE_DEMO ?? '1') === '1';
const host = process.env.HOST || '127.0.0.1';
const port = process.env.PORT || '3000';

/** @type {null | Awaited<ReturnType<typeof ensureCluster>>} */
let cluster = null;
let databaseUrl = process.env.DATABASE_URL;
if (!databaseUrl) {
	cluster = await ensureCluster();
	await createDatabase(cluster.url('postgres'), 'biasline');
	databaseUrl = cluster.url('biasline');
} else {
	say('DATABASE_URL is set: using it, no private cluster');
}

const buildDir = path.join(root, 'build');
ensureBuild(buildDir);

// The local test mail server keeps alarm e-mail for /admin/outbox, unless the site names its own.
/** @type {null | { port: number, stop: () => Promise<void> }} */
let smtp = null;
/** @type {Record<string, string>} */
const mailEnv = {};
if (!process.env.BIASLINE_SMTP_URL) {
	const { startFakeSmtp } = await import('./smtp.mjs'); // after ensureDependencies: it needs smtp-server
	const outbox = process.env.BIASLINE_OUTBOX_DIR || path.join(dataDir(), 'outbox');
	smtp = await startFakeSmtp({ dir: outbox, port: Number(await freePort()) });
	mailEnv.BIASLINE_SMTP_URL = `smtp://127.0.0.1:${smtp.port}`;
	mailEnv.BIASLINE_OUTBOX_DIR = outbox;
	say(`alarm e-mail goes to the local test mail server (read it on /admin/outbox; set BIASLINE_SMTP_URL for real mail)`);
}

const env = {
	...process.env,
	DATABASE_URL: databaseUrl,
	BIASLINE_DATA_DIR: dataDir(),
	BIASLINE_SESSION_KEY: sessionKey(),
	BIASLINE_DEMO: demo ? '1' : '0',
	BIASLINE_ADMIN_EMAIL: process.env.BIASLINE_ADMIN_EMAIL || DEMO_ADMIN.email,
	BIASLINE_ADMIN_PASSWORD: process.env.BIASLINE_ADMIN_PASSWORD || DEMO_ADMIN.password,
	HOST: host,
	PORT: port,
	// adapter-node assumes https without ORIGIN; forms check the Origin header against it.
	ORIGIN: process.env.ORIGIN || `http://${host === '0.0.0.0' ? '127.0.0.1' : host}:${port}`,
	// Open event streams would otherwise hold a shutdown for 30 s.
	SHUTDOWN_TIMEOUT: process.env.SHUTDOWN_TIMEOUT || '2',
	BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT || '2M',
	...mailEnv
};

const app = spawn(process.execPath, [path.join(buildDir, 'index.js')], { env, stdio: 'inherit', cwd: root });
const url = `http://${host}:${port}`;
say(`Biasline is starting on ${url}`);
say(`sign in as ${env.BIASLINE_ADMIN_EMAIL} / ${process.env.BIASLINE_ADMIN_PASSWORD ? '(your BIASLINE_ADMIN_PASSWORD)' : DEMO_ADMIN.password}`);
if (demo) {
	say('demo sign-ins (password "biasline-demo"): engineer noor.haddad@corvane.example, operator tomas.brandt@corvane.example');
}
say('press Ctrl-C to stop the app and the database');

let stopping = false;
/** @type {import('node:child_process').ChildProcess | null} */
let sim = null;
async function shutdown(/** @type {string} */ why) {
	if (stopping) return;
	stopping = true;
	say(`stopping (${why})…`);
	if (sim && sim.exitCode === null) {
		sim.kill('SIGTERM');
		await new Promise((r) => (sim?.exitCode !== null ? r(null) : sim.once('exit', r)));
	}
	if (app.exitCode === null) app.kill('SIGTERM');
	await new Promise((r) => (app.exitCode !== null ? r(null) : app.once('exit', r)));
	if (smtp) await smtp.stop();
	if (cluster?.started) {
		say('stopping PostgreSQL…');
		cluster.stop();
	}
	say('stopped');
	process.exit(0);
}
process.on('SIGINT', () => void shutdown('SIGINT'));
process.on('SIGTERM', () => void shutdown('SIGTERM'));
app.on('exit', (code) => {
	if (!stopping) {
		say(`the app exited with code ${code}`);
		void shutdown('app exited');
	}
});

if (demo) {
	// The demo's simulated stations: they calibrate, then post sweeps of their lots over HTTP.
	await waitForHttp(`${env.ORIGIN}/login`, 120_000).catch(() => {});
	const tokens = path.join(env.BIASLINE_DATA_DIR, 'demo-station-tokens.json');
	for (let i = 0; i < 50 && !fs.existsSync(tokens); i++) await new Promise((r) => setTimeout(r, 200));
	if (fs.existsSync(tokens) && !stopping) {
		const log = fs.openSync(path.join(env.BIASLINE_DATA_DIR, 'station-sim.log'), 'a');
		sim = spawn(
			process.execPath,
			[
				path.join(root, 'station-sim', 'cli.mjs'),
				...['--url', env.ORIGIN, '--tokens', tokens, '--rate', process.env.BIASLINE_SIM_RATE || '1', '--serial-start', 'auto', '--seed', String(Date.now() % 1_000_000)],
				// The demo's story: station A-02's tank inductor creeps, which its reference part shows first.
				...(process.env.BIASLINE_SIM_FAULTS ?? 'drift@A-02=60').split(/\s+/).filter(Boolean).flatMap((f) => ['--fault', f])
			],
			{ stdio: ['ignore', log, log], cwd: root }
		);
		say(`simulated stations are testing parts (log: ${path.relative(root, path.join(env.BIASLINE_DATA_DIR, 'station-sim.log'))})`);
	} else if (!stopping) {
		say('no demo station tokens found: the simulated stations do not run');
	}
}
