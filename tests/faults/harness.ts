// The fault tests' own app instances: each on a throwaway database of its own, started from the
// build that src/ops/test.mjs made, so a test may kill its instance or stop its database without
// disturbing anyone else. Everything goes to 127.0.0.1 only.
import type { ChildProcess } from 'node:child_process';
import { randomBytes, randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import pg from 'pg';
import { expect } from 'vitest';
import { createDatabase, dropDatabase, freePort, startApp, waitForHttp } from '../../src/ops/lib.mjs';
import { TEST_FIXTURE } from '../e2e/line';
import { abruptPartF, pF, referenceReadings, resonanceHz } from '../e2e/physics';

export const ADMIN = { email: 'fault-admin@corvane.example', password: 'fault-admin-password' } as const;

function need(name: string): string {
	const v = process.env[name];
	if (!v) throw new Error(`${name} is not set: run the fault tests with npm test (see DEVELOPERS.md)`);
	return v;
}

/** The folder for the fault tests' logs and their own cluster (set by src/ops/test.mjs). */
export function faultsDir(): string {
	const dir = need('BIASLINE_FAULTS_DIR');
	fs.mkdirSync(dir, { recursive: true });
	return dir;
}

/** The same server address with another database name. */
export function withDatabase(url: string, name: string): string {
	const u = new URL(url);
	u.pathname = `/${name}`;
	return u.toString();
}

export type Instance = {
	name: string;
	url: string;
	port: number;
	dbName: string;
	dbUrl: string;
	/** SIGKILL: no shutdown handler runs, in-flight requests are cut. */
	kill: () => Promise<void>;
	/** Starts the app again on the same port and database. */
	restart: () => Promise<void>;
	/** SIGTERM, then drops the database (when `adminUrl` is reachable). */
	close: () => Promise<void>;
	log: () => string;
};

function exited(p: ChildProcess): Promise<void> {
	return p.exitCode !== null || p.signalCode !== null ? Promise.resolve() : new Promise((r) => p.once('exit', () => r()));
}

/** Creates a database on the cluster of `adminUrl` and starts the built app on it. */
export async function startInstance(o: { name: string; adminUrl: string; asyncCommit?: boolean }): Promise<Instance> {
	const buildDir = need('BIASLINE_FAULTS_BUILD_DIR');
	const dbName = `biasline_fault_${o.name.replace(/\W/g, '_')}_${randomBytes(3).toString('hex')}`;
	await createDatabase(o.adminUrl, dbName);
	const dbUrl = withDatabase(o.adminUrl, dbName);
	// Every station request counts a rate-limit hit, a committed write: without waiting for the WAL
	// flush, ten thousand refused posts take seconds instead of a minute on a busy disk. Only a
	// PostgreSQL crash could lose such a commit, and the tests that use this crash nothing.
	if (o.asyncCommit) await sql(o.adminUrl, `ALTER DATABASE "${dbName}" SET synchronous_commit = off`);
	const port = await freePort();
	const url = `http://127.0.0.1:${port}`;
	const dataDir = path.join(faultsDir(), o.name);
	fs.mkdirSync(dataDir, { recursive: true });
	const env: NodeJS.ProcessEnv = {
		PATH: process.env.PATH,
		HOME: process.env.HOME,
		NODE_ENV: 'production',
		DATABASE_URL: dbUrl,
		BIASLINE_DATA_DIR: dataDir,
		BIASLINE_DEMO: '0',
		BIASLINE_SESSION_KEY: randomBytes(32).toString('base64url'),
		BIASLINE_ADMIN_EMAIL: ADMIN.email,
		BIASLINE_ADMIN_PASSWORD: ADMIN.password,
		SHUTDOWN_TIMEOUT: '1',
		BODY_SIZE_LIMIT: '2M'
	};
	let runs = 0;
	const logFile = () => path.join(dataDir, `app-${runs}.log`);
	const spawnIt = async () => {
		runs++;
		const child = startApp({ buildDir, port, env, logFile: logFile() });
		await waitForHttp(`${url}/login`, 60_000);
		return child;
	};
	let child = await spawnIt();
	return {
		name: o.name,
		url,
		port,
		dbName,
		dbUrl,
		async kill() {
			child.kill('SIGKILL');
			await exited(child);
		},
		async restart() {
			child = await spawnIt();
		},
		async close() {
			if (child.exitCode === null && child.signalCode === null) {
				child.kill('SIGTERM');
				await exited(child);
			}
			await dropDatabase(o.adminUrl, dbName).catch(() => {});
		},
		log: () => fs.readFileSync(logFile(), 'utf8')
	};
}

/** One query on a short-lived connection (the test's own view of the database). */
export async function sql<T extends Record<string, unknown>>(dbUrl: string, text: string, values: unknown[] = []): Promise<T[]> {
	const client = new pg.Client({ connectionString: dbUrl, connectionTimeoutMillis: 5000 });
	await client.connect();
	try {
		return (await client.query<T>(text, values)).rows;
	} finally {
		await client.end();
	}
}

/** Signs in through the API; returns the Cookie header value. */
export async function signIn(url: string, who: { email: string; password: string } = ADMIN): Promise<string> {
	const res = await fetch(`${url}/api/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(who) });
	expect(res.status).toBe(200);
	return (res.headers.get('set-cookie') ?? '').split(';')[0] ?? '';
}

export type FaultStation = { name: string; token: string };
export type FaultLine = { cookie: string; code: string; lotNumber: string; stations: FaultStation[]; biases: number[] };

const jsonInit = (cookie: string, method: string, body: unknown): RequestInit => ({
	method,
	headers: { cookie, 'content-type': 'application/json' },
	body: JSON.stringify(body)
});

/** The admin sets up a product, `stations` calibrated stations and one open lot. */
export async function setUpFaultLine(url: string, o: { prefix: string; stations: number; spc?: Record<string, unknown> }): Promise<FaultLine> {
	const cookie = await signIn(url);
	const tag = randomUUID().slice(0, 6);
	const code = `${o.prefix}-${tag}`;
	const lotNumber = `LT-${o.prefix}-${tag}`;
	const biases = [1, 4, 10];
	const plan = { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }, { biasV: 10 }], ...(o.spc ? { spc: o.spc } : {}) };
	expect((await fetch(`${url}/api/v1/products`, jsonInit(cookie, 'POST', { code, name: `${o.prefix} fault part`, plan }))).status).toBe(201);
	expect((await fetch(`${url}/api/v1/lots`, jsonInit(cookie, 'POST', { number: lotNumber, productCode: code, quantity: 100_000 }))).status).toBe(201);
	const stations: FaultStation[] = [];
	for (let i = 0; i < o.stations; i++) {
		const name = `${o.prefix}S${i}-${tag}`;
		const st = await fetch(`${url}/api/v1/stations`, jsonInit(cookie, 'POST', { name, fixture: TEST_FIXTURE }));
		expect(st.status).toBe(201);
		const token = ((await st.json()) as { token: string }).token;
		const cal = await fetch(`${url}/api/v1/calibrations`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', authorization: `Bearer ${token}` },
			body: JSON.stringify({ references: referenceReadings(TEST_FIXTURE) })
		});
		expect(cal.status).toBe(201);
		stations.push({ name, token });
	}
	return { cookie, code, lotNumber, stations, biases };
}

export type Part = { serial: string; testedAt: string; points: { biasV: number; resonanceHz: number }[] };

/** A good part of the abrupt test junction, its capacitance scaled by (1 + relative). */
export function makePart(serial: string, biases: number[], relative = 0): Part {
	return {
		serial,
		testedAt: new Date().toISOString(),
		points: biases.map((v) => ({ biasV: v, resonanceHz: resonanceHz(TEST_FIXTURE, abruptPartF(v) * (1 + relative)) }))
	};
}

/** One answer; status 0 with `error` when none came (a refused connection, a reset, the bound). */
export type Answer = { status: number; ms: number; sentAt: number; retryAfter: string | null; type: string; body: string; error?: string };

/** One request with a hard client-side bound: a hang becomes `status 0` with error "timeout". */
export async function timedFetch(url: string, init: RequestInit, boundMs: number): Promise<Answer> {
	const sentAt = Date.now();
	try {
		const res = await fetch(url, { ...init, redirect: 'manual', signal: AbortSignal.timeout(boundMs) });
		const body = await res.text();
		return { status: res.status, ms: Date.now() - sentAt, sentAt, retryAfter: res.headers.get('retry-after'), type: res.headers.get('content-type') ?? '', body };
	} catch (e) {
		const name = e instanceof Error ? e.name : '';
		const error = name === 'TimeoutError' ? 'timeout' : e instanceof Error ? String(e.cause instanceof Error ? e.cause.message : e.message) : String(e);
		return { status: 0, ms: Date.now() - sentAt, sentAt, retryAfter: null, type: '', body: '', error };
	}
}

export type BatchLog = { key: string; serials: string[]; attempts: Answer[]; ackedAt: number | null };

/**
 * A simulated station as the station simulator behaves (station-sim/client.ts): each batch gets one
 * Idempotency-Key, and network errors, 5xx and 429 are retried with the SAME key until an answer
 * of 200/201 (or the deadline). The retry wait is short (at most `maxWaitMs`) so the test probes
 * an outage densely; Retry-After is read but capped.
 */
export async function runStation(o: {
	url: () => string;
	station: FaultStation;
	lotNumber: string;
	biases: number[];
	batchSize: number;
	/** No new batch starts once this returns true; the current one is finished. */
	stopNew: () => boolean;
	deadline: number;
	boundMs: number;
	maxWaitMs: number;
	logs: BatchLog[];
	serialPrefix: string;
}): Promise<void> {
	let n = 0;
	while (!o.stopNew() && Date.now() < o.deadline) {
		const parts = Array.from({ length: o.batchSize }, () => makePart(`${o.serialPrefix}-${String(++n).padStart(5, '0')}`, o.biases, 0.002 * Math.sin(n)));
		const body = JSON.stringify({ lot: o.lotNumber, units: parts });
		const log: BatchLog = { key: randomUUID(), serials: parts.map((p) => p.serial), attempts: [], ackedAt: null };
		o.logs.push(log);
		while (Date.now() < o.deadline) {
			const a = await timedFetch(
				`${o.url()}/api/v1/results`,
				{ method: 'POST', headers: { 'content-type': 'application/json', authorization: `Bearer ${o.station.token}`, 'idempotency-key': log.key }, body },
				o.boundMs
			);
			log.attempts.push(a);
			if (a.status === 200 || a.status === 201) {
				log.ackedAt = Date.now();
				break;
			}
			if (a.status !== 0 && a.status < 500 && a.status !== 429) break; // final: the test reports it
			const asked = a.retryAfter ? Number(a.retryAfter) * 1000 : 100;
			await new Promise((r) => setTimeout(r, Math.min(Number.isFinite(asked) ? asked : 100, o.maxWaitMs)));
		}
	}
}

/** How many times each serial of the lot is stored. */
export async function storedCounts(dbUrl: string, lotNumber: string): Promise<Map<string, number>> {
	const rows = await sql<{ serial: string; n: string }>(
		dbUrl,
		'SELECT u.serial, count(*) AS n FROM units u JOIN lots l ON l.id = u.lot_id WHERE l.number = $1 GROUP BY u.serial',
		[lotNumber]
	);
	return new Map(rows.map((r) => [r.serial, Number(r.n)]));
}
