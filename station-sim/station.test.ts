import { afterEach, describe, expect, it } from 'vitest';
import type { ResultUnit } from './client';
import { sendJson, sendProblem, startMock, type MockServer, type RecordedRequest } from './mock-server';
import { Station, corruptBatch, type FaultSpec, type StationConfig } from './station';
import type { Arrangement } from './physics';
import { createRng } from './rng';
import { runSimulation } from './simulation';

/*
 * The station loop on a virtual clock: sleeping advances the clock at once, so minutes of station
 * time pass in milliseconds while the HTTP traffic to the node:http mock is real.
 */

const FIXTURE = { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' as Arrangement };
const PLAN = {
	points: [
		{ biasV: 1, minF: 2.4e-11, maxF: 2.9e-11 },
		{ biasV: 4 },
		{ biasV: 25, minF: 6e-12, maxF: 8e-12 }
	],
	leakage: { biasV: 25, maxA: 1e-8 }
};
const T0 = Date.parse('2026-03-02T07:00:00.000Z');

interface Clock {
	t: number;
}

function virtualClock(): { clock: Clock; now: () => number; sleep: (ms: number, signal?: AbortSignal) => Promise<void> } {
	const clock: Clock = { t: T0 };
	return {
		clock,
		now: () => clock.t,
		sleep: async (ms, signal) => {
			if (signal?.aborted) return;
			clock.t += Math.max(0, ms);
			await new Promise<void>((resolve) => setImmediate(resolve));
		}
	};
}

interface Fit {
	inductanceH: number;
	strayF: number;
}

/**
 * Least-squares line through 1/(2πf)² = L·C_stray + L·C_ref,eff, which is f = 1/(2π√(L·C)) with
 * C = C_stray + series(C_ref, C_blocking); slope L, intercept L·C_stray.
 */
function fitCalibration(refs: { capacitanceF: number; resonanceHz: number }[], blockingF: number | null): Fit {
	const xs = refs.map((r) => (blockingF === null ? r.capacitanceF : (r.capacitanceF * blockingF) / (r.capacitanceF + blockingF)));
	const ys = refs.map((r) => 1 / (2 * Math.PI * r.resonanceHz) ** 2);
	const n = xs.length;
	const mx = xs.reduce((a, b) => a + b, 0) / n;
	const my = ys.reduce((a, b) => a + b, 0) / n;
	let sxx = 0;
	let sxy = 0;
	xs.forEach((x, i) => {
		sxx += (x - mx) ** 2;
		sxy += (x - mx) * ((ys[i] ?? 0) - my);
	});
	const inductanceH = sxy / sxx;
	return { inductanceH, strayF: (my - inductanceH * mx) / inductanceH };
}

interface FakeServer {
	server: MockServer;
	calibrations: { at: number; fit: Fit; references: { capacitanceF: number; resonanceHz: number }[] }[];
	units: (ResultUnit & { receivedAt: number })[];
	resultPosts: RecordedRequest[];
	conflicts409: number;
}

interface FakeOptions {
	validityMs?: number;
	calibrationInForce?: boolean;
	/** Called for each results post before the normal handling; return true when it answered. */
	intercept?: (req: RecordedRequest, res: import('node:http').ServerResponse, raw: import('node:http').IncomingMessage, n: number) => boolean;
	plan?: unknown;
	fixture?: typeof FIXTURE | null;
}

function isValidUnit(u: unknown): boolean {
	if (typeof u !== 'object' || u === null) return false;
	const unit = u as Record<string, unknown>;
	if (typeof unit.serial !== 'string' || unit.serial.length === 0) return false;
	if (unit.kind !== 'production' && unit.kind !== 'reference') return false;
	if (!Array.isArray(unit.points) || unit.points.length === 0) return false;
	return unit.points.every((p: unknown) => {
		if (typeof p !== 'object' || p === null) return false;
		const point = p as Record<string, unknown>;
		return typeof point.biasV === 'number' && typeof point.resonanceHz === 'number' && point.resonanceHz > 0 && typeof point.bandwidthHz === 'number';
	});
}

async function fakeServer(clock: Clock, options: FakeOptions = {}): Promise<FakeServer> {
	const validityMs = options.validityMs ?? 8 * 3600_000;
	const state: Omit<FakeServer, 'server'> = { calibrations: [], units: [], resultPosts: [], conflicts409: 0 };
	let validUntil = options.calibrationInForce ? clock.t + validityMs : Number.NEGATIVE_INFINITY;
	let postCount = 0;
	const server = await startMock((req, res, raw) => {
		if (req.method === 'GET' && req.path === '/api/v1/station') {
			const calibration = validUntil > clock.t ? { inductanceH: 1e-4, strayF: 3e-12, at: new Date(clock.t).toISOString(), validUntil: new Date(validUntil).toISOString() } : null;
			sendJson(res, 200, { station: { name: 'T-01' }, fixture: options.fixture === undefined ? FIXTURE : options.fixture, calibration, plan: options.plan === undefined ? PLAN : options.plan });
			return;
		}
		if (req.method === 'POST' && req.path === '/api/v1/calibrations') {
			const body = req.body as { references: { capacitanceF: number; resonanceHz: number }[] };
			const fit = fitCalibration(body.references, FIXTURE.blockingF);
			state.calibrations.push({ at: clock.t, fit, references: body.references });
			validUntil = clock.t + validityMs;
			sendJson(res, 201, { ...fit, residualPpm: 1, validUntil: new Date(validUntil).toISOString() });
			return;
		}
		if (req.method === 'POST' && req.path === '/api/v1/results') {
			postCount += 1;
			state.resultPosts.push(req);
			if (options.intercept?.(req, res, raw, postCount)) return;
			const body = req.body as { lot?: unknown; units?: unknown };
			const units = Array.isArray(body.units) ? body.units : [];
			if (typeof body.lot !== 'string' || units.length === 0 || !units.every(isValidUnit)) {
				sendProblem(res, 400, 'urn:test:validation', 'Invalid body', { errors: [{ path: 'units', message: 'invalid' }] });
				return;
			}
			if (!(validUntil > clock.t)) {
				state.conflicts409 += 1;
				sendProblem(res, 409, 'urn:test:calibration-required', 'No calibration in force');
				return;
			}
			for (const u of units as ResultUnit[]) state.units.push({ ...u, receivedAt: clock.t });
			sendJson(res, 201, { results: (units as ResultUnit[]).map((u) => ({ serial: u.serial, bin: u.kind === 'reference' ? 'R' : 1, pass: true })) });
			return;
		}
		sendProblem(res, 404, 'urn:test:not-found', 'Not found');
	});
	// The same object the handler mutates, so counters read later are current.
	return Object.assign(state, { server });
}

let servers: MockServer[] = [];
afterEach(async () => {
	await Promise.all(servers.map((s) => s.close()));
	servers = [];
});

function config(url: string, overrides: Partial<StationConfig> = {}): StationConfig {
	return {
		name: 'T-01',
		token: 'tok',
		lot: 'L-0417',
		product: 'KV-1405',
		baseUrl: url,
		rate: 5,
		batchMin: 1,
		batchMax: 10,
		refEveryParts: 10,
		refEveryMin: null,
		seed: 11,
		faults: [],
		...overrides
	};
}

/** Runs a station on the virtual clock until `until` holds (or a safety limit of virtual time). */
async function runUntil(stationConfig: (url: string) => StationConfig, until: (fake: FakeServer, clock: Clock) => boolean, fakeOptions: FakeOptions = {}, maxVirtualMs = 3 * 3600_000) {
	const { clock, now, sleep } = virtualClock();
	const fake = await fakeServer(clock, fakeOptions);
	servers.push(fake.server);
	const controller = new AbortController();
	let n = 0;
	const station = new Station(stationConfig(fake.server.url), {
		signal: controller.signal,
		now,
		sleep: async (ms, signal) => {
			await sleep(ms, signal);
			if (until(fake, clock) || clock.t - T0 > maxVirtualMs) controller.abort();
		},
		uuid: () => `k-${++n}`,
		client: { maxAttempts: 3, baseBackoffMs: 10 }
	});
	await station.run();
	return { fake, clock, stats: station.stats() };
}

describe('station loop', () => {
	it('calibrates first, then posts every unit at exactly the plan bias points', async () => {
		const { fake, stats } = await runUntil((url) => config(url), (f) => f.units.length >= 100);
		expect(fake.calibrations.length).toBeGreaterThanOrEqual(1);
		const firstCal = fake.calibrations[0];
		const firstPostAt = Number(fake.resultPosts.length > 0 ? fake.units[0]?.receivedAt : Number.NaN);
		expect(firstCal?.at).toBeLessThanOrEqual(firstPostAt);
		expect(firstCal?.references.map((r) => r.capacitanceF)).toEqual([10e-12, 47e-12, 100e-12, 220e-12]);
		// The true fixture is within about 1 % of its record; the independent line fit must see that.
		expect(Math.abs((firstCal?.fit.inductanceH ?? 0) / FIXTURE.inductanceH - 1)).toBeLessThan(0.015);
		for (const u of fake.units) expect(u.points.map((p) => p.biasV)).toEqual([1, 4, 25]);
		expect(fake.conflicts409).toBe(0);
		expect(stats.acknowledged).toBe(fake.units.length);
		expect(stats.posted).toBe(fake.units.length);
		expect(stats.errors).toBe(0);
	});

	it('falls back to the default bias list when the station has no plan', async () => {
		const { fake } = await runUntil((url) => config(url), (f) => f.units.length >= 5, { plan: null });
		for (const u of fake.units) expect(u.points.map((p) => p.biasV)).toEqual([1, 2, 4, 8, 15, 25]);
	});

	it('measures its reference part first and then after every 10 production parts', async () => {
		const { fake, stats } = await runUntil((url) => config(url, { refEveryParts: 10 }), (f) => f.units.length >= 120);
		const kinds = fake.units.map((u) => u.kind);
		expect(kinds[0]).toBe('reference');
		const refIdx = kinds.flatMap((k, i) => (k === 'reference' ? [i] : []));
		for (let i = 1; i < refIdx.length; i += 1) expect((refIdx[i] ?? 0) - (refIdx[i - 1] ?? 0)).toBe(11);
		for (const u of fake.units.filter((x) => x.kind === 'reference')) expect(u.serial).toBe('REF-T-01');
		const serials = fake.units.filter((u) => u.kind === 'production').map((u) => u.serial);
		expect(new Set(serials).size).toBe(serials.length);
		expect(serials[0]).toBe('L-0417-T-01-000001');
		// `references` counts parts measured; the last batch may still be in hand when the run stops.
		expect(stats.bins.R).toBe(refIdx.length);
		expect(stats.references).toBeGreaterThanOrEqual(refIdx.length);
	});

	it('measures its reference part every 2 minutes when scheduled by time', async () => {
		const { fake } = await runUntil((url) => config(url, { refEveryParts: null, refEveryMin: 2, rate: 1 }), (_f, c) => c.t - T0 > 11 * 60_000);
		const refTimes = fake.units.filter((u) => u.kind === 'reference').map((u) => Date.parse(u.testedAt));
		expect(refTimes.length).toBeGreaterThanOrEqual(5);
		for (let i = 1; i < refTimes.length; i += 1) {
			const gap = (refTimes[i] ?? 0) - (refTimes[i - 1] ?? 0);
			// At 1 part/s the due reference goes in at the next part slot: 2 min, to within one slot.
			expect(gap).toBeGreaterThanOrEqual(120_000);
			expect(gap).toBeLessThanOrEqual(121_000);
		}
	});

	it('tests parts at --rate: testedAt steps 1/rate apart', async () => {
		const { fake } = await runUntil((url) => config(url, { rate: 4, refEveryParts: null }), (f) => f.units.length >= 50);
		const times = fake.units.map((u) => Date.parse(u.testedAt));
		for (let i = 1; i < times.length; i += 1) expect((times[i] ?? 0) - (times[i - 1] ?? 0)).toBe(250);
	});

	it('batches hold 1..10 units, each with its own key', async () => {
		const { fake } = await runUntil((url) => config(url, { batchMin: 1, batchMax: 10 }), (f) => f.units.length >= 200);
		const sizes = fake.resultPosts.map((p) => (p.body as { units: unknown[] }).units.length);
		expect(Math.min(...sizes)).toBeGreaterThanOrEqual(1);
		expect(Math.max(...sizes)).toBeLessThanOrEqual(10);
		expect(new Set(sizes).size).toBeGreaterThan(3);
		const keys = fake.resultPosts.map((p) => p.headers['idempotency-key']);
		expect(new Set(keys).size).toBe(keys.length);
	});

	it('recalibrates before validUntil, so results are never refused', async () => {
		const { fake, stats } = await runUntil((url) => config(url, { rate: 1 }), (_f, c) => c.t - T0 > 10 * 60_000, { validityMs: 60_000 });
		expect(fake.calibrations.length).toBeGreaterThanOrEqual(10);
		expect(stats.calibrations).toBe(fake.calibrations.length);
		expect(fake.conflicts409).toBe(0);
	});

	it('uses a calibration already in force instead of calibrating at start', async () => {
		const { fake } = await runUntil((url) => config(url), (f) => f.units.length >= 20, { calibrationInForce: true });
		expect(fake.calibrations).toHaveLength(0);
	});

	it('on a 409 calibration-required, recalibrates and delivers the same units under a new key', async () => {
		const { fake, stats } = await runUntil(
			(url) => config(url),
			(f) => f.units.length >= 20,
			{
				calibrationInForce: true,
				intercept: (_req, res, _raw, n) => {
					if (n !== 3) return false;
					sendProblem(res, 409, 'urn:test:calibration-required', 'Calibration expired');
					return true;
				}
			}
		);
		expect(fake.calibrations).toHaveLength(1);
		const [third, fourth] = [fake.resultPosts[2], fake.resultPosts[3]];
		expect(fourth?.body).toEqual(third?.body);
		expect(fourth?.headers['idempotency-key']).not.toBe(third?.headers['idempotency-key']);
		expect(stats.errors).toBe(0);
	});

	it('keeps an undelivered batch and its key across a long outage (client gave up), then delivers it', async () => {
		const { fake, stats } = await runUntil(
			(url) => config(url),
			(f) => f.units.length >= 20,
			{
				intercept: (_req, res, raw, n) => {
					if (n === 1) {
						raw.socket.destroy();
						return true;
					}
					if (n <= 7) {
						sendProblem(res, 503, 'urn:test:unavailable', 'Database unavailable', {}, { 'Retry-After': '1' });
						return true;
					}
					return false;
				}
			}
		);
		const keys = fake.resultPosts.slice(0, 8).map((p) => p.headers['idempotency-key']);
		expect(new Set(keys).size).toBe(1);
		expect(stats.retries).toBeGreaterThanOrEqual(5);
		expect(stats.acknowledged).toBe(fake.units.length);
		const firstBatch = fake.resultPosts[0]?.body as { units: { serial: string }[] };
		expect(fake.units[0]?.serial).toBe(firstBatch.units[0]?.serial);
	});
});

describe('station loop: seeds, fixtures and refusals', () => {
	it('the same seed replays the same measurements; another seed does not', async () => {
		const body = async (seed: number) => {
			const { fake } = await runUntil((url) => config(url, { seed }), (f) => f.units.length >= 30);
			return fake.units.slice(0, 30).map(({ receivedAt: _r, ...u }) => u);
		};
		const a = await body(3);
		const b = await body(3);
		const c = await body(4);
		expect(b).toEqual(a);
		expect(c).not.toEqual(a);
	});

	it('measures in the fixture the server describes: parallel2 resonates lower than single', async () => {
		const first = async (fixture: typeof FIXTURE) => {
			const { fake } = await runUntil((url) => config(url), (f) => f.units.length >= 40, { fixture });
			const prod = fake.units.filter((u) => u.kind === 'production');
			return prod.reduce((a, u) => a + (u.points[0]?.resonanceHz ?? 0), 0) / prod.length;
		};
		const single = await first(FIXTURE);
		const pair = await first({ ...FIXTURE, arrangement: 'parallel2' });
		// Twice the branch capacitance: f scales by √((C_s + C)/(C_s + 2C)) = √(29.5/56) ≈ 0.73 at 1 V (by hand).
		expect(pair / single).toBeGreaterThan(0.68);
		expect(pair / single).toBeLessThan(0.76);
	});

	it('recalibrates when a refresh shows the calibration was revoked', async () => {
		const { clock, now, sleep } = virtualClock();
		let revoked = false;
		let revokedOnce = false;
		let calibrations = 0;
		const server = await startMock((req, res) => {
			if (req.path === '/api/v1/station') {
				const calibration = revoked ? null : { inductanceH: 1e-4, strayF: 3e-12, at: new Date(T0).toISOString(), validUntil: new Date(T0 + 8 * 3600_000).toISOString() };
				sendJson(res, 200, { station: {}, fixture: FIXTURE, calibration, plan: PLAN });
			} else if (req.path === '/api/v1/calibrations') {
				calibrations += 1;
				revoked = false;
				sendJson(res, 201, { inductanceH: 1e-4, strayF: 3e-12, residualPpm: 1, validUntil: new Date(clock.t + 8 * 3600_000).toISOString() });
			} else {
				const units = (req.body as { units: { serial: string }[] }).units;
				sendJson(res, 201, { results: units.map((u) => ({ serial: u.serial, bin: 1, pass: true })) });
			}
		});
		servers.push(server);
		const controller = new AbortController();
		const station = new Station(config(server.url, { refreshEveryMs: 30_000 }), {
			signal: controller.signal,
			now,
			sleep: async (ms, signal) => {
				await sleep(ms, signal);
				if (!revokedOnce && clock.t - T0 > 60_000) {
					revoked = true;
					revokedOnce = true;
				}
				if (clock.t - T0 > 5 * 60_000) controller.abort();
			}
		});
		await station.run();
		expect(calibrations).toBe(1);
		expect(station.stats().calibrations).toBe(1);
	});

	it('a bad token at start: no crash, errors counted, no results posted, the log is not flooded', async () => {
		const { clock, now, sleep } = virtualClock();
		const server = await startMock((_req, res) => sendProblem(res, 401, 'https://biasline.example/problems/401', 'Not signed in'));
		servers.push(server);
		const controller = new AbortController();
		const station = new Station(config(server.url), {
			signal: controller.signal,
			now,
			sleep: async (ms, signal) => {
				await sleep(ms, signal);
				if (clock.t - T0 > 10 * 60_000) controller.abort();
			}
		});
		await station.run();
		const stats = station.stats();
		expect(stats.errors).toBeGreaterThan(0);
		expect(stats.posted).toBe(0);
		// Waits double from 2 s to 30 s: about 25 attempts in 10 minutes rather than 300.
		expect(server.requests.length).toBeLessThan(30);
		expect(server.requests.every((r) => r.path === '/api/v1/station')).toBe(true);
	});
});

describe('fault switches', () => {
	function meanC(units: ResultUnit[], fit: Fit, biasIndex: number): number {
		// C_part = series^-1(C_tank − C_stray, C_blocking) with C_tank = 1/((2πf)²L).
		const cs = units.map((u) => {
			const f = u.points[biasIndex]?.resonanceHz ?? Number.NaN;
			const tank = 1 / ((2 * Math.PI * f) ** 2 * fit.inductanceH);
			const branch = tank - fit.strayF;
			return (branch * FIXTURE.blockingF) / (FIXTURE.blockingF - branch);
		});
		return cs.reduce((a, b) => a + b, 0) / cs.length;
	}

	it('badlot@L-0417=8 raises Cj0 of that lot by about 8 % (capacitance at 1 V ≈ +8 %)', async () => {
		const normal = await runUntil((url) => config(url, { refEveryParts: null }), (f) => f.units.length >= 300);
		const bad = await runUntil((url) => config(url, { refEveryParts: null, faults: [{ kind: 'badlot', targets: ['L-0417'], value: 8 }] }), (f) => f.units.length >= 300);
		const fitN = normal.fake.calibrations[0]?.fit;
		const fitB = bad.fake.calibrations[0]?.fit;
		if (!fitN || !fitB) throw new Error('no calibration');
		// Cp is not shifted, so the 1 V capacitance rises a little less than 8 %.
		const ratio = meanC(bad.fake.units, fitB, 0) / meanC(normal.fake.units, fitN, 0);
		expect(ratio).toBeGreaterThan(1.07);
		expect(ratio).toBeLessThan(1.09);
	});

	it('drift@T-01=100 makes the calibrated inductance creep by about 100 ppm per minute', async () => {
		const { fake } = await runUntil((url) => config(url, { rate: 1, faults: [{ kind: 'drift', targets: ['T-01'], value: 100 }] }), (_f, c) => c.t - T0 > 20 * 60_000, { validityMs: 5 * 60_000 });
		const first = fake.calibrations[0];
		const last = fake.calibrations[fake.calibrations.length - 1];
		if (!first || !last) throw new Error('no calibrations');
		const minutes = (last.at - first.at) / 60_000;
		const ppmPerMin = ((last.fit.inductanceH / first.fit.inductanceH - 1) * 1e6) / minutes;
		expect(minutes).toBeGreaterThan(10);
		expect(ppmPerMin).toBeGreaterThan(90);
		expect(ppmPerMin).toBeLessThan(110);
	});

	it('a drift switch naming another station leaves this one alone', async () => {
		const { fake } = await runUntil((url) => config(url, { rate: 1, faults: [{ kind: 'drift', targets: ['T-09'], value: 100 }] }), (_f, c) => c.t - T0 > 20 * 60_000, { validityMs: 5 * 60_000 });
		const first = fake.calibrations[0];
		const last = fake.calibrations[fake.calibrations.length - 1];
		if (!first || !last) throw new Error('no calibrations');
		expect(Math.abs(last.fit.inductanceH / first.fit.inductanceH - 1)).toBeLessThan(50e-6);
	});

	it('noisy=10 makes the reference part readings scatter about 10 times more', async () => {
		const spread = async (faults: FaultSpec[]): Promise<number> => {
			const { fake } = await runUntil((url) => config(url, { refEveryParts: 2, faults, frequencyNoisePpm: 20 }), (f) => f.units.filter((u) => u.kind === 'reference').length >= 200, { calibrationInForce: true });
			const fs = fake.units.filter((u) => u.kind === 'reference').map((u) => u.points[2]?.resonanceHz ?? 0);
			const mean = fs.reduce((a, b) => a + b, 0) / fs.length;
			return Math.sqrt(fs.reduce((a, b) => a + (b - mean) ** 2, 0) / (fs.length - 1)) / mean;
		};
		const quiet = await spread([]);
		const noisy = await spread([{ kind: 'noisy', targets: [], value: 10 }]);
		expect(noisy / quiet).toBeGreaterThan(7);
		expect(noisy / quiet).toBeLessThan(13);
	});

	it('malformed=1 sends only malformed batches; each is refused with 400 and not retried', async () => {
		const { fake, stats } = await runUntil((url) => config(url, { faults: [{ kind: 'malformed', targets: ['T-01'], value: 1 }] }), (f) => f.resultPosts.length >= 30);
		expect(fake.units).toHaveLength(0);
		expect(stats.malformedSent).toBe(fake.resultPosts.length);
		expect(stats.rejected).toBe(fake.resultPosts.length);
		const keys = fake.resultPosts.map((p) => p.headers['idempotency-key']);
		expect(new Set(keys).size).toBe(keys.length);
	});

	it('every corruption makes a batch invalid under the contract', () => {
		const rng = createRng(3);
		const batch = {
			lot: 'L-1',
			units: [{ serial: 'S-1', testedAt: '2026-03-02T07:00:00.000Z', kind: 'production' as const, temperatureC: 24, leakageA: 1e-10, points: [{ biasV: 1, resonanceHz: 3e6, bandwidthHz: 1e4 }] }]
		};
		for (let i = 0; i < 200; i += 1) {
			const bad = corruptBatch(batch, rng);
			const units = Array.isArray(bad.units) ? bad.units : [];
			const valid = typeof bad.lot === 'string' && units.length > 0 && units.every(isValidUnit);
			expect(valid).toBe(false);
		}
		expect(batch.units[0]?.points[0]?.resonanceHz).toBe(3e6);
	});

	it('offline@T-01=60..120 sends nothing between 60 s and 120 s after start', async () => {
		const { fake, clock } = await runUntil((url) => config(url, { faults: [{ kind: 'offline', targets: ['T-01'], window: { fromS: 60, toS: 120 } }] }), (_f, c) => c.t - T0 > 200_000);
		expect(clock.t - T0).toBeGreaterThan(200_000);
		const tested = fake.units.map((u) => (Date.parse(u.testedAt) - T0) / 1000);
		expect(tested.some((s) => s < 60)).toBe(true);
		expect(tested.some((s) => s > 120)).toBe(true);
		expect(tested.filter((s) => s > 61 && s < 120)).toEqual([]);
		expect(fake.units.filter((u) => (u.receivedAt - T0) / 1000 > 61 && (u.receivedAt - T0) / 1000 < 120)).toEqual([]);
	});
});

describe('runSimulation', () => {
	it('runs several stations on the real clock and stop() ends them cleanly', async () => {
		const realClock: Clock = {
			get t() {
				return Date.now();
			}
		};
		const fake = await fakeServer(realClock, { calibrationInForce: true });
		servers.push(fake.server);
		const sim = runSimulation({
			url: fake.server.url,
			tokens: [
				{ name: 'T-01', token: 'a', lot: 'L-1', product: 'KV-1405' },
				{ name: 'T-02', token: 'b', lot: 'L-2', product: 'KV-2210H' },
				{ name: 'T-03', token: 'c', lot: 'L-3', product: 'NEW-1' }
			],
			rate: 100,
			batchMin: 5,
			batchMax: 5,
			refEveryParts: 20,
			seed: 5
		});
		while (fake.units.length < 60) await new Promise((r) => setTimeout(r, 20));
		const stats = await sim.stop();
		expect(stats.stations.map((s) => s.name)).toEqual(['T-01', 'T-02', 'T-03']);
		for (const s of stats.stations) {
			expect(s.posted).toBeGreaterThan(0);
			expect(s.errors).toBe(0);
		}
		expect(stats.totals.acknowledged).toBe(stats.stations.reduce((a, s) => a + s.acknowledged, 0));
		const count = fake.resultPosts.length;
		await new Promise((r) => setTimeout(r, 150));
		expect(fake.resultPosts.length).toBe(count);
		expect(await sim.done).toEqual(stats);
	});

	it('stops by itself after durationS, even while the server is unreachable', async () => {
		const sim = runSimulation({ url: 'http://127.0.0.1:9', tokens: [{ name: 'T-01', token: 'a', lot: 'L-1' }], durationS: 0.3, client: { maxAttempts: 2, baseBackoffMs: 10 } });
		const stats = await sim.done;
		expect(stats.stations[0]?.acknowledged).toBe(0);
		expect(stats.stations[0]?.errors).toBeGreaterThan(0);
	});

	it('with no tokens, finishes at once with empty stats', async () => {
		const stats = await runSimulation({ url: 'http://127.0.0.1:9', tokens: [] }).stop();
		expect(stats.stations).toEqual([]);
		expect(stats.totals.posted).toBe(0);
	});
});
