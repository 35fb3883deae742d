// @ts-check
// `npm test`: everything the tests need, then the tests. Unit and integration tests run in
// vitest against a throwaway database on the private cluster; the browser tests run against the
// built server on a second throwaway database; the fault tests last, on app instances and a cluster
// of their own (they kill and stop them). Extra arguments go to vitest (`npm test -- -t name`);
// BIASLINE_TEST_STAGES=unit,e2e,faults picks stages (default: all three).
import { spawn } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import {
	createDatabase,
	dropDatabase,
	ensureBuild,
	ensureCluster,
	ensureDebianPackages,
	ensureDependencies,
	freePort,
	root,
	say,
	startApp,
	stopChild,
	waitForHttp
} from './lib.mjs';

const started = Date.now();
const stages = new Set((process.env.BIASLINE_TEST_STAGES || 'unit,e2e,faults').split(',').map((x) => x.trim()));
ensureDependencies();
ensureDebianPackages([
	{ bin: '/usr/bin/chromium', pkg: 'chromium' },
	{ bin: '/usr/bin/ngspice', pkg: 'ngspice' }
]);

// Tests keep their own data folder, so they never touch the demo's cluster data or tokens.
process.env.BIASLINE_DATA_DIR = process.env.BIASLINE_TEST_DATA_DIR || path.join(root, '.test-data');
const cluster = await ensureCluster();
const tag = `${process.pid}_${randomBytes(3).toString('hex')}`;
const dbUnit = `biasline_test_${tag}`;
const dbE2e = `biasline_e2e_${tag}`;
const adminUrl = cluster.url('postgres');
await createDatabase(adminUrl, dbUnit);
await createDatabase(adminUrl, dbE2e);

const vitest = path.join(root, 'node_modules', '.bin', 'vitest');
const extra = process.argv.slice(2);
const baseEnv = {
	...process.env,
	BIASLINE_SESSION_KEY: randomBytes(32).toString('base64url'),
	BIASLINE_TEST_ADMIN_URL: adminUrl,
	BIASLINE_DEMO: '0'
};

/** @type {import('node:child_process').ChildProcess | null} */
let server = null;
/** @type {import('node:child_process').ChildProcess | null} */
let serverB = null;
/** @type {null | { port: number, stop: () => Promise<void> }} */
let smtp = null;
let failed = false;

/** @param {string[]} args @param {NodeJS.ProcessEnv} env */
function vitestRun(args, env) {
	return new Promise((resolve) => {
		const p = spawn(vitest, ['run', ...args, ...extra], { stdio: 'inherit', cwd: root, env });
		p.on('exit', (code) => resolve(code ?? 1));
	});
}

async function cleanup() {
	await stopChild(server);
	await stopChild(serverB);
	if (smtp) await smtp.stop();
	await dropDatabase(adminUrl, dbUnit).catch(() => {});
	await dropDatabase(adminUrl, dbE2e).catch(() => {});
	if (cluster.started) cluster.stop();
}
process.on('SIGINT', () => void cleanup().then(() => process.exit(130)));

try {
	if (stages.has('unit')) {
		say('unit and integration tests…');
		const code1 = await vitestRun(['--project', 'unit', '--project', 'integration'], {
			...baseEnv,
			DATABASE_URL: cluster.url(dbUnit)
		});
		if (code1 !== 0) failed = true;
	}

	const buildDir = path.join(process.env.BIASLINE_DATA_DIR, 'build');
	if (stages.has('e2e') || stages.has('faults')) ensureBuild(buildDir);
	if (stages.has('e2e')) await e2eStage(buildDir);
	if (stages.has('faults')) {
		// Last: these tests SIGKILL their own app instances and stop a PostgreSQL cluster of their own.
		const faultsDir = path.join(process.env.BIASLINE_DATA_DIR, 'faults');
		say(`fault tests (logs and their own cluster in ${path.relative(root, faultsDir)})…`);
		const t0 = Date.now();
		const code3 = await vitestRun(['--project', 'faults'], {
			...baseEnv,
			BIASLINE_FAULTS_BUILD_DIR: buildDir,
			BIASLINE_FAULTS_DIR: faultsDir
		});
		say(`fault tests took ${Math.round((Date.now() - t0) / 1000)} s`);
		if (code3 !== 0) failed = true;
	}
} catch (e) {
	console.error(e);
	failed = true;
} finally {
	await cleanup();
}
say(`${failed ? 'FAILED' : 'all tests passed'} in ${Math.round((Date.now() - started) / 1000)} s`);
process.exit(failed ? 1 : 0);

/** The HTTP and browser tests against two built instances on one database. @param {string} buildDir */
async function e2eStage(buildDir) {
	const port = await freePort();
	const url = `http://127.0.0.1:${port}`;
	// The built server mails through its own local test mail server, as under npm start.
	const e2eDir = path.join(process.env.BIASLINE_DATA_DIR, 'e2e');
	const { startFakeSmtp } = await import('./smtp.mjs');
	smtp = await startFakeSmtp({ dir: path.join(e2eDir, 'outbox'), port: Number(await freePort()) });
	const serverEnv = {
		...baseEnv,
		DATABASE_URL: cluster.url(dbE2e),
		BIASLINE_DEMO: '1',
		BIASLINE_DATA_DIR: e2eDir,
		BIASLINE_SMTP_URL: `smtp://127.0.0.1:${smtp.port}`,
		BIASLINE_OUTBOX_DIR: path.join(e2eDir, 'outbox'),
		HOST: '127.0.0.1',
		SHUTDOWN_TIMEOUT: '1',
		BODY_SIZE_LIMIT: '2M'
	};
	const dir = process.env.BIASLINE_DATA_DIR ?? root;
	/** @param {number} p @param {string} name */
	const startServer = (p, name) => startApp({ buildDir, port: p, env: serverEnv, logFile: path.join(dir, `${name}.log`) });
	const logFile = path.join(process.env.BIASLINE_DATA_DIR, 'e2e-server.log');
	server = startServer(port, 'e2e-server');
	await waitForHttp(`${url}/login`);
	// A second instance on the same database: live updates must cross instances.
	const portB = await freePort();
	const urlB = `http://127.0.0.1:${portB}`;
	serverB = startServer(portB, 'e2e-server-b');
	await waitForHttp(`${urlB}/login`);
	say(`browser and HTTP tests against ${url} (server log: ${path.relative(root, logFile)})…`);
	const code2 = await vitestRun(['--project', 'e2e'], {
		...baseEnv,
		BIASLINE_E2E_URL: url,
		BIASLINE_E2E_URL_B: urlB,
		BIASLINE_E2E_ADMIN_EMAIL: 'admin@corvane.example',
		BIASLINE_E2E_ADMIN_PASSWORD: 'biasline-admin'
	});
	if (code2 !== 0) failed = true;
	// The fault tests that follow measure their own instances: free the machine's two cores.
	await stopChild(server);
	await stopChild(serverB);
	server = serverB = null;
}
