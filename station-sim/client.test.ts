import { afterEach, describe, expect, it } from 'vitest';
import { StationClient, classifyConflict, parseRetryAfterMs, type ClientOptions, type LogLevel, type ResultsBatch } from './client';
import { sendJson, sendProblem, startMock, type MockHandler, type MockServer } from './mock-server';
import { createRng } from './rng';

const BATCH: ResultsBatch = {
	lot: 'L-0417',
	units: [
		{
			serial: 'L-0417-T-01-000001',
			testedAt: '2026-03-02T07:15:00.000Z',
			kind: 'production',
			temperatureC: 24.8,
			leakageA: 2.1e-10,
			points: [{ biasV: 1, resonanceHz: 2.86e6, bandwidthHz: 1.9e4 }]
		}
	]
};

const ANSWER = { results: [{ serial: 'L-0417-T-01-000001', bin: 1, pass: true, capacitanceF: [2.6e-11], q: [250], fit: null, failures: [] }] };
const CALIBRATION = { inductanceH: 1.0002e-4, strayF: 3.1e-12, residualPpm: 2.5, validUntil: '2026-03-02T15:15:00.000Z' };

let mock: MockServer | null = null;
afterEach(async () => {
	await mock?.close();
	mock = null;
});

interface Harness {
	server: MockServer;
	client: StationClient;
	sleeps: number[];
	logs: { level: LogLevel; message: string; details: Record<string, unknown> | undefined }[];
	retries: string[];
}

let keyCounter = 0;

async function harness(handler: MockHandler, overrides: Partial<ClientOptions> = {}): Promise<Harness> {
	const server = await startMock(handler);
	mock = server;
	const sleeps: number[] = [];
	const logs: Harness['logs'] = [];
	const retries: string[] = [];
	const client = new StationClient({
		baseUrl: server.url,
		token: 'tok-123',
		rng: createRng(1),
		// Records the wait instead of waiting, so the tests stay fast and see exactly what was asked.
		sleep: async (ms) => {
			sleeps.push(ms);
		},
		uuid: () => `key-${++keyCounter}`,
		log: (level, message, details) => logs.push({ level, message, details }),
		onRetry: (reason) => retries.push(reason),
		maxAttempts: 5,
		...overrides
	});
	return { server, client, sleeps, logs, retries };
}

/** Answers with the scripted handlers in order, then with the last one. */
function sequence(...steps: MockHandler[]): MockHandler {
	let i = 0;
	return (req, res, raw) => {
		const step = steps[Math.min(i, steps.length - 1)];
		i += 1;
		return step?.(req, res, raw);
	};
}

const ok201: MockHandler = (_req, res) => sendJson(res, 201, ANSWER);

describe('StationClient.postResults retries with the same Idempotency-Key', () => {
	it('after a dropped connection', async () => {
		const h = await harness(sequence((_req, _res, raw) => {
				raw.socket.destroy();
			}, ok201));
		const r = await h.client.postResults(BATCH);
		expect(r.ok).toBe(true);
		expect(h.server.requests).toHaveLength(2);
		const keys = h.server.requests.map((q) => q.headers['idempotency-key']);
		expect(keys[0]).toBeTruthy();
		expect(keys[1]).toBe(keys[0]);
		expect(h.server.requests[1]?.body).toEqual(BATCH);
		expect(h.retries).toHaveLength(1);
	});

	it('after a 503 with Retry-After: 0, waiting 0 ms', async () => {
		const h = await harness(sequence((_req, res) => sendProblem(res, 503, 'urn:biasline:problem:unavailable', 'Database unavailable', {}, { 'Retry-After': '0' }), ok201));
		const r = await h.client.postResults(BATCH);
		expect(r.ok).toBe(true);
		expect(h.sleeps).toEqual([0]);
		const keys = h.server.requests.map((q) => q.headers['idempotency-key']);
		expect(new Set(keys).size).toBe(1);
		expect(keys).toHaveLength(2);
	});

	it('after a 429 with Retry-After: 1, asking for a 1000 ms wait', async () => {
		const h = await harness(sequence((_req, res) => sendProblem(res, 429, 'urn:biasline:problem:rate-limited', 'Too many requests', {}, { 'Retry-After': '1' }), ok201));
		const r = await h.client.postResults(BATCH);
		expect(r.ok).toBe(true);
		if (r.ok) expect(r.attempts).toBe(2);
		expect(h.sleeps).toEqual([1000]);
		const keys = h.server.requests.map((q) => q.headers['idempotency-key']);
		expect(keys[1]).toBe(keys[0]);
	});

	it('after a 429 with Retry-After: 1, really waits about a second with the default sleep', async () => {
		const server = await startMock(sequence((_req, res) => sendProblem(res, 429, 'rate-limited', 'Too many requests', {}, { 'Retry-After': '1' }), ok201));
		mock = server;
		const client = new StationClient({ baseUrl: server.url, token: 't', rng: createRng(2) });
		const started = performance.now();
		const r = await client.postResults(BATCH);
		expect(r.ok).toBe(true);
		// A lower bound only: honouring Retry-After means not coming back earlier.
		expect(performance.now() - started).toBeGreaterThanOrEqual(950);
		expect(server.requests[1]?.headers['idempotency-key']).toBe(server.requests[0]?.headers['idempotency-key']);
	});

	it('gives up after maxAttempts on a persistent 503, every attempt under one key', async () => {
		const h = await harness((_req, res) => sendProblem(res, 503, 'unavailable', 'Database unavailable', {}, { 'Retry-After': '0' }), { maxAttempts: 3 });
		const r = await h.client.postResults(BATCH);
		expect(r.ok).toBe(false);
		if (!r.ok) {
			expect(r.error.code).toBe('gave-up');
			expect(r.error.status).toBe(503);
			expect(r.attempts).toBe(3);
		}
		expect(new Set(h.server.requests.map((q) => q.headers['idempotency-key'])).size).toBe(1);
		expect(h.server.requests).toHaveLength(3);
	});

	it('without Retry-After, backs off exponentially with seeded full jitter (repeatable)', async () => {
		const fail502: MockHandler = (_req, res) => sendProblem(res, 502, 'bad-gateway', 'Bad gateway');
		const a = await harness(fail502, { maxAttempts: 5, baseBackoffMs: 100, rng: createRng(99) });
		await a.client.postResults(BATCH);
		await a.server.close();
		mock = null;
		const b = await harness(fail502, { maxAttempts: 5, baseBackoffMs: 100, rng: createRng(99) });
		await b.client.postResults(BATCH);
		expect(a.sleeps).toHaveLength(4);
		expect(b.sleeps).toEqual(a.sleeps);
		a.sleeps.forEach((ms, i) => {
			expect(ms).toBeGreaterThanOrEqual(0);
			expect(ms).toBeLessThanOrEqual(100 * 2 ** i);
		});
	});

	it('gives up at once when Retry-After exceeds the total time budget, reporting the wait', async () => {
		const h = await harness((_req, res) => sendProblem(res, 503, 'unavailable', 'Database unavailable', {}, { 'Retry-After': '120' }), { maxTotalMs: 60_000 });
		const r = await h.client.postResults(BATCH);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.retryAfterMs).toBe(120_000);
		expect(h.server.requests).toHaveLength(1);
		expect(h.sleeps).toEqual([]);
	});

	it('reports a replayed answer (200, Idempotent-Replayed: true)', async () => {
		const h = await harness((_req, res) => sendJson(res, 200, ANSWER, { 'Idempotent-Replayed': 'true' }));
		const r = await h.client.postResults(BATCH, { idempotencyKey: 'fixed-key' });
		expect(r.ok).toBe(true);
		if (r.ok) {
			expect(r.value.replayed).toBe(true);
			expect(r.value.idempotencyKey).toBe('fixed-key');
			expect(r.value.results[0]?.bin).toBe('1');
		}
		expect(h.server.requests[0]?.headers['idempotency-key']).toBe('fixed-key');
	});
});

describe('StationClient: final answers are not retried', () => {
	it('a 400 is returned at once and logged with the problem document errors', async () => {
		const errors = [
			{ path: 'units.0.points.0.resonanceHz', message: 'must be positive' },
			{ path: 'lot', message: 'required' }
		];
		const h = await harness((_req, res) => sendProblem(res, 400, 'urn:biasline:problem:validation', 'Invalid body', { errors }));
		const r = await h.client.postResults({ units: [] });
		expect(r.ok).toBe(false);
		if (!r.ok) {
			expect(r.error.code).toBe('rejected');
			expect(r.error.problem?.errors).toEqual(errors);
		}
		expect(h.server.requests).toHaveLength(1);
		expect(h.sleeps).toEqual([]);
		expect(h.logs.some((l) => l.level === 'error' && JSON.stringify(l.details).includes('units.0.points.0.resonanceHz'))).toBe(true);
	});

	it.each([
		[401, 'unauthorized'],
		[403, 'forbidden'],
		[404, 'not-found'],
		[413, 'too-large'],
		[422, 'rejected']
	])('a %s is final (%s)', async (status, code) => {
		const h = await harness((_req, res) => sendProblem(res, status, 'x', 'x'));
		const r = await h.client.postResults(BATCH);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe(code);
		expect(h.server.requests).toHaveLength(1);
	});

	it('a 409 idempotency-conflict is final and does not recalibrate', async () => {
		let recalibrations = 0;
		const h = await harness((_req, res) => sendProblem(res, 409, 'urn:biasline:problem:idempotency-conflict', 'Idempotency key reused with another body'));
		const r = await h.client.postResults(BATCH, {
			recalibrate: async () => {
				recalibrations += 1;
				return true;
			}
		});
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('idempotency-conflict');
		expect(recalibrations).toBe(0);
		expect(h.server.requests).toHaveLength(1);
	});
});

describe('StationClient: 409 calibration-required', () => {
	it('recalibrates, then posts the same body once more under a new key', async () => {
		let calibrated = false;
		const h = await harness((req, res) => {
			if (req.path === '/api/v1/calibrations') {
				calibrated = true;
				sendJson(res, 201, CALIBRATION);
			} else if (!calibrated) {
				sendProblem(res, 409, 'https://biasline.example/problems/calibration-required', 'No calibration in force');
			} else {
				sendJson(res, 201, ANSWER);
			}
		});
		const client = h.client;
		const r = await client.postResults(BATCH, {
			recalibrate: async () => {
				const c = await client.calibrate([
					{ capacitanceF: 1e-11, resonanceHz: 4.5e6 },
					{ capacitanceF: 1e-10, resonanceHz: 1.5e6 }
				]);
				return c.ok;
			}
		});
		expect(r.ok).toBe(true);
		if (r.ok) expect(r.value.recalibrated).toBe(true);
		expect(h.server.requests.map((q) => `${q.method} ${q.path}`)).toEqual(['POST /api/v1/results', 'POST /api/v1/calibrations', 'POST /api/v1/results']);
		const [first, , second] = h.server.requests;
		expect(second?.headers['idempotency-key']).not.toBe(first?.headers['idempotency-key']);
		expect(second?.body).toEqual(first?.body);
	});

	it('recalibrates at most once per post', async () => {
		let recalibrations = 0;
		const h = await harness((_req, res) => sendProblem(res, 409, 'calibration-required', 'Calibration expired'));
		const r = await h.client.postResults(BATCH, {
			recalibrate: async () => {
				recalibrations += 1;
				return true;
			}
		});
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('calibration-required');
		expect(recalibrations).toBe(1);
		expect(h.server.requests).toHaveLength(2);
	});
});

describe('StationClient: GET /api/v1/station and POST /api/v1/calibrations', () => {
	it('sends the bearer token and reads the station, fixture, calibration and plan', async () => {
		const h = await harness((_req, res) =>
			sendJson(res, 200, {
				station: { name: 'T-01' },
				fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: null, arrangement: 'antiseries2' },
				calibration: { inductanceH: 1.0001e-4, strayF: 3.2e-12, at: '2026-03-02T07:00:00.000Z', validUntil: '2026-03-02T15:00:00.000Z' },
				plan: { points: [{ biasV: 1, minF: 2.9e-11, maxF: 3.3e-11 }, { biasV: 4 }, { biasV: 'x' }], leakage: { biasV: 25, maxA: 1e-8 } }
			})
		);
		const r = await h.client.getStation();
		expect(h.server.requests[0]?.headers.authorization).toBe('Bearer tok-123');
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.value.fixture).toEqual({ inductanceH: 1e-4, strayF: 3e-12, blockingF: null, arrangement: 'antiseries2' });
		expect(r.value.calibration?.validUntil).toBe('2026-03-02T15:00:00.000Z');
		expect(r.value.plan?.points.map((p) => p.biasV)).toEqual([1, 4]);
		expect(r.value.plan?.leakageBiasV).toBe(25);
	});

	it('null calibration and plan are read as null', async () => {
		const h = await harness((_req, res) => sendJson(res, 200, { station: {}, fixture: null, calibration: null, plan: null }));
		const r = await h.client.getStation();
		expect(r.ok).toBe(true);
		if (r.ok) {
			expect(r.value.calibration).toBeNull();
			expect(r.value.plan).toBeNull();
		}
	});

	it('posts references and reads the calibration answer', async () => {
		const h = await harness((_req, res) => sendJson(res, 201, CALIBRATION));
		const refs = [
			{ capacitanceF: 1e-11, resonanceHz: 4.5e6 },
			{ capacitanceF: 4.7e-11, resonanceHz: 2.2e6 }
		];
		const r = await h.client.calibrate(refs);
		expect(r.ok).toBe(true);
		if (r.ok) expect(r.value).toEqual(CALIBRATION);
		expect(h.server.requests[0]?.body).toEqual({ references: refs });
	});

	it('an aborted signal stops a wait and reports stopped', async () => {
		const controller = new AbortController();
		const h = await harness((_req, res) => sendProblem(res, 503, 'unavailable', 'Database unavailable', {}, { 'Retry-After': '0' }), {
			signal: controller.signal,
			sleep: async () => {
				controller.abort();
			}
		});
		const r = await h.client.getStation();
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.error.code).toBe('stopped');
	});
});

describe('parseRetryAfterMs (RFC 9110 §10.2.3: delay-seconds or HTTP-date)', () => {
	const now = Date.parse('1999-12-31T23:59:00Z');
	it.each<[string | null, number | null]>([
		['0', 0],
		['1', 1000],
		['120', 120_000],
		// The RFC's own example date: "Fri, 31 Dec 1999 23:59:59 GMT" is 59 s after `now`.
		['Fri, 31 Dec 1999 23:59:59 GMT', 59_000],
		['Fri, 31 Dec 1999 23:58:00 GMT', 0],
		['-1', null],
		['soon', null],
		['', null],
		[null, null]
	])('%s → %s', (header, expected) => {
		expect(parseRetryAfterMs(header, now)).toBe(expected);
	});
});

describe('classifyConflict (our documented assumption about the 409 problem types)', () => {
	it.each([
		[{ type: 'https://biasline.example/problems/calibration-required', title: 'Calibration required' }, 'calibration-required'],
		[{ type: 'about:blank', title: 'No calibration in force' }, 'calibration-required'],
		[{ type: 'urn:biasline:problem:idempotency-conflict', title: 'Conflict' }, 'idempotency-conflict'],
		[{ type: 'about:blank', title: 'Conflict', detail: 'Idempotency key reused with another body' }, 'idempotency-conflict'],
		[{ type: 'urn:biasline:problem:lot-closed', title: 'Lot closed' }, 'conflict'],
		[undefined, 'conflict']
	])('%j → %s', (problem, expected) => {
		expect(classifyConflict(problem)).toBe(expected);
	});
});
