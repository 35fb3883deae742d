// SIGKILL of the app in the middle of a 10-station load, then a restart on the same port: the
// stations retry every unanswered batch with its Idempotency-Key. An accepted batch is committed
// before its answer (README, "Station posts"), so what was acknowledged before the kill survives it,
// and a batch committed whose answer the kill cut off is replayed on retry, not stored again.
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { runStation, setUpFaultLine, startInstance, storedCounts, type BatchLog, type FaultLine, type Instance } from './harness';

const STATIONS = 10;
let app: Instance;
let line: FaultLine;

beforeAll(async () => {
	const adminUrl = process.env.BIASLINE_TEST_ADMIN_URL;
	if (!adminUrl) throw new Error('BIASLINE_TEST_ADMIN_URL is not set: run with npm test');
	app = await startInstance({ name: 'sigkill', adminUrl });
	line = await setUpFaultLine(app.url, { prefix: 'KIL', stations: STATIONS });
});
afterAll(async () => {
	await app?.close();
});

describe('SIGKILL during a 10-station load', () => {
	test('every acknowledged part is stored once, and after the restart every part is stored once', async () => {
		const logs: BatchLog[][] = line.stations.map(() => []);
		let stop = false;
		const deadline = Date.now() + 90_000;
		const load = line.stations.map((station, i) =>
			runStation({
				url: () => app.url,
				station,
				lotNumber: line.lotNumber,
				biases: line.biases,
				batchSize: 5,
				stopNew: () => stop,
				deadline,
				boundMs: 10_000,
				maxWaitMs: 200,
				logs: logs[i] ?? [],
				serialPrefix: `${line.lotNumber}-${i}`
			})
		);
		const ackedCount = () => logs.flat().filter((b) => b.ackedAt !== null).length;
		// Let the load settle in, then kill while batches are in flight.
		const until = Date.now() + 20_000;
		while (ackedCount() < 40 && Date.now() < until) await new Promise((r) => setTimeout(r, 50));
		await new Promise((r) => setTimeout(r, 300));
		await app.kill();
		const killedAt = Date.now();
		const ackedBeforeKill = logs.flat().filter((b) => b.ackedAt !== null && b.ackedAt <= killedAt);
		// The stations keep retrying against a dead port for a moment, then the app comes back.
		await new Promise((r) => setTimeout(r, 1000));
		await app.restart();
		await new Promise((r) => setTimeout(r, 2000));
		stop = true;
		await Promise.all(load);

		const batches = logs.flat();
		const cut = batches.filter((b) => b.attempts.some((a) => a.status === 0));
		expect(ackedBeforeKill.length).toBeGreaterThanOrEqual(40);
		// The kill landed mid-load: some batches lost their connection and had to be retried.
		expect(cut.length).toBeGreaterThan(0);
		// No answer but success and retries: no 4xx, no 500 (a 5xx other than 503 would be a bug).
		const statuses = new Set(batches.flatMap((b) => b.attempts.map((a) => a.status)));
		for (const s of statuses) expect([0, 200, 201, 503]).toContain(s);
		// Every batch finished with an acknowledgement before the deadline.
		expect(batches.filter((b) => b.ackedAt === null)).toEqual([]);

		const counts = await storedCounts(app.dbUrl, line.lotNumber);
		for (const b of ackedBeforeKill) for (const s of b.serials) expect(counts.get(s), s).toBe(1);
		const sent = batches.flatMap((b) => b.serials);
		expect(new Set(sent).size).toBe(sent.length);
		for (const s of sent) expect(counts.get(s), s).toBe(1);
		expect([...counts.keys()].filter((s) => !sent.includes(s))).toEqual([]);
		const replayed = batches.filter((b) => b.attempts.some((a) => a.status === 200)).length;
		console.log(
			`[faults] SIGKILL: ${batches.length} batches (${sent.length} parts), ${ackedBeforeKill.length} acknowledged before the kill, ` +
				`${cut.length} cut by it, ${replayed} answered by replay after the restart`
		);
	});
});
