import { afterEach, describe, expect, it } from 'vitest';
import { sendJson, startMock, type MockServer } from './mock-server';
import { Station } from './station';

// The simulator follows a running study: it measures the serial GET /api/v1/station names, posts
// it with `study` and the part's lot, and asks again. A serial that comes back is the same
// simulated part, so its readings differ only by the reading noise.

const FIXTURE = { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' };
const PLAN = { productCode: 'KV-1405', points: [{ biasV: 1 }, { biasV: 4 }, { biasV: 25 }] };
const CELLS = [
	{ serial: 'S-1', trial: 1 },
	{ serial: 'S-2', trial: 1 },
	{ serial: 'S-1', trial: 2 },
	{ serial: 'S-2', trial: 2 }
];

let server: MockServer | null = null;
afterEach(async () => {
	await server?.close();
	server = null;
});

describe('a simulated station in a study', () => {
	it('measures the named parts in turn with study and lot, the same part each time a serial returns', async () => {
		const posts: { lot: string; study?: number; units: { serial: string; kind: string; points: { biasV: number; resonanceHz: number }[] }[] }[] = [];
		const controller = new AbortController();
		server = await startMock((req, res) => {
			if (req.method === 'GET' && req.path === '/api/v1/station') {
				const cell = CELLS[posts.length];
				const calibration = { inductanceH: 1e-4, strayF: 3e-12, at: new Date().toISOString(), validUntil: new Date(Date.now() + 3600_000).toISOString() };
				const study = cell ? { id: 41, productCode: 'KV-1405', next: { serial: cell.serial, lot: 'LT-S', trial: cell.trial }, biasV: [1, 4, 25] } : null;
				if (!cell) controller.abort();
				sendJson(res, 200, { station: { name: 'T-01' }, fixture: FIXTURE, calibration, plan: PLAN, lot: { number: 'LT-P', productCode: 'KV-1405' }, study });
				return;
			}
			if (req.method === 'POST' && req.path === '/api/v1/results') {
				const body = req.body as (typeof posts)[number];
				posts.push(body);
				sendJson(res, 201, { results: body.units.map((u) => ({ serial: u.serial, bin: 1, pass: true })) });
				return;
			}
			sendJson(res, 404, {});
		});
		const station = new Station(
			{ name: 'T-01', token: 't', lot: 'LT-P', product: 'KV-1405', baseUrl: server.url, rate: 200, batchMin: 1, batchMax: 1, refEveryParts: null, refEveryMin: null, seed: 3, faults: [] },
			{ signal: controller.signal }
		);
		const timer = setTimeout(() => controller.abort(), 10_000);
		await station.run();
		clearTimeout(timer);
		expect(posts.map((p) => [p.study, p.lot, p.units[0]?.serial])).toEqual(CELLS.map((c) => [41, 'LT-S', c.serial]));
		const f = (i: number) => posts[i]?.units[0]?.points.map((p) => p.resonanceHz) ?? [];
		const rel = (a: number[], b: number[]) => Math.max(...a.map((x, i) => Math.abs(x / (b[i] ?? Number.NaN) - 1)));
		// Same serial: only the 5 ppm reading noise (our simulator's default) apart.
		expect(rel(f(0), f(2))).toBeLessThan(50e-6);
		expect(rel(f(1), f(3))).toBeLessThan(50e-6);
		// Two different parts of a lot differ by far more than the noise.
		expect(rel(f(0), f(1))).toBeGreaterThan(200e-6);
		expect(posts[0]?.units[0]?.points.map((p) => p.biasV)).toEqual([1, 4, 25]);
	});
});
