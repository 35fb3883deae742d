// PostgreSQL stopped in the middle of a load, on a cluster of its own so no other test notices.
// The public contract (shared API contract, Conventions): 503 with Retry-After while the database is
// unavailable, never a 500; here also never a hang (every answer within BOUND_MS); and the app
// recovers by itself once the database is back, without a restart.
import fs from 'node:fs';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { ensureCluster } from '../../src/ops/lib.mjs';
import { launch } from '../e2e/helpers';
import { faultsDir, makePart, runStation, setUpFaultLine, startInstance, storedCounts, timedFetch, type Answer, type BatchLog, type FaultLine, type Instance } from './harness';

const BOUND_MS = 5_000;
type Cluster = Awaited<ReturnType<typeof ensureCluster>>;
let cluster: Cluster;
let app: Instance;
let line: FaultLine;
let browser: Browser;

beforeAll(async () => {
	browser = await launch();
	cluster = await ensureCluster({ dataDir: path.join(faultsDir(), 'pg-outage') });
	app = await startInstance({ name: 'outage', adminUrl: cluster.url('postgres') });
	line = await setUpFaultLine(app.url, { prefix: 'OUT', stations: 3 });
});
afterAll(async () => {
	await browser?.close();
	await cluster?.start().catch(() => {});
	await app?.close();
	cluster?.stop();
});

type Probe = { what: string; answer: Answer };

/** Reads pages and API answers in a loop, as people's screens do, until stopped. */
async function probe(o: { cookie: string; lotNumber: string; stop: () => boolean; out: Probe[] }): Promise<void> {
	const targets = [
		{ what: 'page /floor', path: '/floor' },
		{ what: `page /lots/${o.lotNumber}`, path: `/lots/${o.lotNumber}` },
		{ what: 'api floor', path: '/api/v1/floor' },
		{ what: 'api lot', path: `/api/v1/lots/${o.lotNumber}` },
		{ what: 'api alarms', path: '/api/v1/alarms?status=open' }
	];
	let i = 0;
	while (!o.stop()) {
		const t = targets[i++ % targets.length];
		if (!t) break;
		o.out.push({ what: t.what, answer: await timedFetch(`${app.url}${t.path}`, { headers: { cookie: o.cookie } }, BOUND_MS) });
		await new Promise((r) => setTimeout(r, 30));
	}
}

/** Waits for the first `unit` event of `serial` on a new stream of the lot. */
async function streamSees(cookie: string, serial: string, post: () => Promise<void>): Promise<boolean> {
	const res = await fetch(`${app.url}/api/v1/stream?lot=${encodeURIComponent(line.lotNumber)}`, { headers: { cookie }, signal: AbortSignal.timeout(15_000) });
	expect(res.status).toBe(200);
	const reader = res.body?.getReader();
	if (!reader) return false;
	// Past the stream's own replay from the log, so the part can only arrive through LISTEN/NOTIFY.
	await new Promise((r) => setTimeout(r, 500));
	await post();
	const decoder = new TextDecoder();
	let text = '';
	try {
		while (!text.includes(serial)) {
			const { value, done } = await reader.read();
			if (done) return false;
			text += decoder.decode(value, { stream: true });
		}
		return true;
	} finally {
		await reader.cancel().catch(() => {});
	}
}

describe('PostgreSQL stopped during the load', () => {
	test('answers are 503 with Retry-After within the bound, never 500; the app recovers by itself', async () => {
		// The live hub starts with the first stream, before the outage.
		expect(await streamSees(line.cookie, `${line.lotNumber}-warm`, async () => {
			const r = await fetch(`${app.url}/api/v1/results`, {
				method: 'POST',
				headers: { 'content-type': 'application/json', authorization: `Bearer ${line.stations[0]?.token}`, 'idempotency-key': `warm-${line.lotNumber}` },
				body: JSON.stringify({ lot: line.lotNumber, units: [makePart(`${line.lotNumber}-warm`, line.biases)] })
			});
			expect(r.status).toBe(201);
		})).toBe(true);

		const logs: BatchLog[][] = line.stations.map(() => []);
		const probes: Probe[] = [];
		let stopLoad = false;
		let stopProbe = false;
		const deadline = Date.now() + 90_000;
		const load = line.stations.map((station, i) =>
			runStation({
				url: () => app.url,
				station,
				lotNumber: line.lotNumber,
				biases: line.biases,
				batchSize: 5,
				stopNew: () => stopLoad,
				deadline,
				boundMs: BOUND_MS,
				maxWaitMs: 250,
				logs: logs[i] ?? [],
				serialPrefix: `${line.lotNumber}-${i}`
			})
		);
		const reading = probe({ cookie: line.cookie, lotNumber: line.lotNumber, stop: () => stopProbe, out: probes });
		await new Promise((r) => setTimeout(r, 1500));

		await cluster.stopAsync();
		const downFrom = Date.now();
		// What a person sees meanwhile: the error page, in Chromium (screenshot beside the logs).
		const context = await browser.newContext({ viewport: { width: 1366, height: 768 } });
		const [name = '', value = ''] = line.cookie.split(/=(.*)/s);
		await context.addCookies([{ name, value, url: app.url }]);
		const page = await context.newPage();
		const shown = await page.goto(`${app.url}/floor`);
		expect(shown?.status()).toBe(503);
		expect(await page.locator('h1').textContent()).toContain('Back in a moment');
		const shots = path.join(faultsDir(), 'screenshots');
		fs.mkdirSync(shots, { recursive: true });
		await page.screenshot({ path: path.join(shots, 'database-unavailable-1366.png') });
		await context.close();
		await new Promise((r) => setTimeout(r, Math.max(0, downFrom + 4000 - Date.now())));
		const downUntil = Date.now();
		await cluster.start();
		const upAt = Date.now();

		// Recovery without a restart: a new batch is accepted and pages are served again.
		let recoveredAt: number | null = null;
		while (Date.now() < upAt + 30_000) {
			const ok = logs.flat().some((b) => b.attempts.some((a) => a.sentAt > upAt && (a.status === 201 || a.status === 200)));
			const pages = probes.some((p) => p.answer.sentAt > upAt && p.answer.status === 200 && p.what.startsWith('page'));
			if (ok && pages) {
				recoveredAt = Date.now();
				break;
			}
			await new Promise((r) => setTimeout(r, 100));
		}
		stopLoad = true;
		await Promise.all(load);
		stopProbe = true;
		await reading;
		expect(recoveredAt, 'posts accepted and pages served after the database came back').not.toBeNull();

		const answers = [...logs.flat().flatMap((b) => b.attempts.map((a) => ({ what: 'post results', answer: a }))), ...probes];
		// Never a hang, never a 500, never a dropped connection: every request got an answer in time.
		const bad = answers.filter((x) => x.answer.status === 0 || x.answer.status === 500 || x.answer.ms > BOUND_MS);
		expect(bad.map((x) => `${x.what}: ${x.answer.status} in ${x.answer.ms} ms`)).toEqual([]);
		// Everything sent while the database was down answered 503 with Retry-After; the API with
		// an RFC 9457 problem document, pages with the error page.
		const during = answers.filter((x) => x.answer.sentAt >= downFrom + 50 && x.answer.sentAt + x.answer.ms <= downUntil);
		expect(during.length).toBeGreaterThan(20);
		for (const x of during) {
			const a = x.answer;
			if (a.status === 0) continue; // reported above
			expect(a.status, `${x.what} during the outage`).toBe(503);
			expect(Number(a.retryAfter), `${x.what} Retry-After`).toBeGreaterThan(0);
			if (x.what.startsWith('page')) {
				expect(a.type).toContain('text/html');
				expect(a.body).toContain('Error 503');
			} else {
				expect(a.type).toContain('application/problem+json');
				const p = JSON.parse(a.body) as { type: string; title: string; status: number; detail: string };
				expect(p.status).toBe(503);
				expect(p.type).toMatch(/^https:\/\//);
				expect(p.title.length).toBeGreaterThan(0);
				expect(p.detail.length).toBeGreaterThan(0);
			}
		}
		// Any other answer in the whole run is a success (or a refusal the station made no cause for: none).
		for (const x of answers) expect([200, 201, 503], x.what).toContain(x.answer.status);

		// Nothing was lost or doubled: every batch ended acknowledged, every part is stored once.
		const batches = logs.flat();
		expect(batches.filter((b) => b.ackedAt === null).map((b) => b.key)).toEqual([]);
		const counts = await storedCounts(app.dbUrl, line.lotNumber);
		for (const s of batches.flatMap((b) => b.serials)) expect(counts.get(s), s).toBe(1);

		// The live hub's LISTEN connection came back: a part posted now reaches a new stream.
		const serial = `${line.lotNumber}-after`;
		expect(await streamSees(line.cookie, serial, async () => {
			const r = await fetch(`${app.url}/api/v1/results`, {
				method: 'POST',
				headers: { 'content-type': 'application/json', authorization: `Bearer ${line.stations[0]?.token}`, 'idempotency-key': `after-${line.lotNumber}` },
				body: JSON.stringify({ lot: line.lotNumber, units: [makePart(serial, line.biases)] })
			});
			expect(r.status).toBe(201);
		})).toBe(true);
		// The app process itself never went down.
		expect(app.log()).not.toMatch(/Unhandled|uncaught/i);
		console.log(
			`[faults] database outage: ${during.length} answers during ${downUntil - downFrom} ms down, all 503; ` +
				`recovered ${(recoveredAt ?? 0) - upAt} ms after the start; slowest answer ${Math.max(...answers.map((x) => x.answer.ms))} ms`
		);
	});
});
