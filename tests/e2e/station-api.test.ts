import { randomUUID } from 'node:crypto';
import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieFor } from './helpers';
import { abruptPartF as partF, pF, referenceReadings, resonanceHz, type TestFixture } from './physics';

// The station interface of the public contract, against the built server and a real database.
// Resonances come from the test's own statement of the tank physics (./physics.ts).

const FIXTURE: TestFixture = { inductanceH: 100e-6, strayF: 3.0 * pF, blockingF: 100e-9, arrangement: 'single' };
const resonance = (partCapF: number) => resonanceHz(FIXTURE, partCapF);
const BIASES = [1, 2, 4, 8, 15, 25];

const tag = randomUUID().slice(0, 8);
const code = `TST-${tag}`;
const lotNumber = `LT-T-${tag}`;
let admin = '';
let token = '';

function unit(serial: string, shift = 1) {
	return {
		serial,
		testedAt: new Date().toISOString(),
		temperatureC: 24.5,
		leakageA: 3e-10,
		points: BIASES.map((v) => ({ biasV: v, resonanceHz: resonance(partF(v) * shift), bandwidthHz: resonance(partF(v) * shift) / 250 }))
	};
}

const post = (path: string, body: unknown, headers: Record<string, string> = {}) =>
	fetch(baseUrl() + path, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body: typeof body === 'string' ? body : JSON.stringify(body) });
const asStation = (t = token) => ({ authorization: `Bearer ${t}` });

async function tested(): Promise<number> {
	const res = await fetch(`${baseUrl()}/api/v1/lots/${lotNumber}`, { headers: { cookie: admin } });
	return ((await res.json()) as { tested: number }).tested;
}

async function calibrate(t = token) {
	return post('/api/v1/calibrations', { references: referenceReadings(FIXTURE) }, asStation(t));
}

beforeAll(async () => {
	admin = await cookieFor('admin');
	const product = await post(
		'/api/v1/products',
		{
			code,
			name: 'Test abrupt part',
			plan: {
				points: [{ biasV: 1, minF: 25 * pF, maxF: 28 * pF }, { biasV: 2 }, { biasV: 4, minF: 15 * pF, maxF: 17.4 * pF }, { biasV: 8 }, { biasV: 15 }, { biasV: 25, minF: 6.6 * pF, maxF: 7.7 * pF }],
				ratio: { lowBiasV: 1, highBiasV: 25, min: 3.4 },
				q: { biasV: 1, min: 150 },
				leakage: { biasV: 25, maxA: 1e-8 }
			}
		},
		{ cookie: admin }
	);
	expect(product.status).toBe(201);
	const station = await post('/api/v1/stations', { name: `T-${tag}`, line: 'Test line', fixture: FIXTURE }, { cookie: admin });
	expect(station.status).toBe(201);
	token = ((await station.json()) as { token: string }).token;
	const lot = await post('/api/v1/lots', { number: lotNumber, productCode: code, quantity: 1000 }, { cookie: admin });
	expect(lot.status).toBe(201);
});

describe('station authentication', () => {
	test('no token and a bad token are 401 problems', async () => {
		for (const headers of [{}, asStation('bst_not-a-real-token'), { authorization: 'Basic abc' }]) {
			const res = await post('/api/v1/results', { lot: lotNumber, units: [unit('X-1')] }, { 'idempotency-key': randomUUID(), ...headers });
			expect(res.status).toBe(401);
			expect(res.headers.get('content-type')).toContain('application/problem+json');
		}
		expect((await fetch(`${baseUrl()}/api/v1/station`)).status).toBe(401);
	});

	test('a person’s session on a station endpoint is 401', async () => {
		const res = await post('/api/v1/results', { lot: lotNumber, units: [unit('X-2')] }, { cookie: admin, 'idempotency-key': randomUUID() });
		expect(res.status).toBe(401);
		expect(((await res.json()) as { detail: string }).detail).toContain('station token');
	});

	test('a station token on people’s endpoints is 401', async () => {
		const users = await post('/api/v1/users', { email: 'x@y.example', name: 'X', role: 'admin', password: 'a long password 1' }, asStation());
		expect(users.status).toBe(401);
		const lots = await fetch(`${baseUrl()}/api/v1/lots/${lotNumber}`, { headers: asStation() });
		expect(lots.status).toBe(401);
	});
});

describe('calibration and results', () => {
	test('results are refused with 409 while the station has no calibration in force', async () => {
		const res = await post('/api/v1/results', { lot: lotNumber, units: [unit('U-0')] }, { ...asStation(), 'idempotency-key': randomUUID() });
		expect(res.status).toBe(409);
		expect(((await res.json()) as { type: string }).type).toMatch(/calibration-required$/);
		expect(await tested()).toBe(0);
	});

	test('a calibration from four reference capacitors recovers L and the stray', async () => {
		const res = await calibrate();
		expect(res.status).toBe(201);
		const cal = (await res.json()) as { inductanceH: number; strayF: number; residualPpm: number; validUntil: string };
		expect(cal.inductanceH / FIXTURE.inductanceH).toBeCloseTo(1, 9);
		expect(cal.strayF / FIXTURE.strayF).toBeCloseTo(1, 6);
		expect(cal.residualPpm).toBeLessThan(1);
		// Default validity: 8 hours.
		expect(new Date(cal.validUntil).getTime() - Date.now()).toBeGreaterThan(7.9 * 3600_000);
	});

	test('GET /api/v1/station shows the fixture and the calibration in force', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/station`, { headers: asStation() });
		expect(res.status).toBe(200);
		const view = (await res.json()) as { fixture: typeof FIXTURE; calibration: { inductanceH: number } | null };
		expect(view.fixture).toEqual(FIXTURE);
		expect(view.calibration?.inductanceH).toBeCloseTo(FIXTURE.inductanceH, 12);
	});

	test('an invalid batch is a 400 naming every bad field, and stores nothing', async () => {
		const bad = unit('U-bad');
		const body = {
			lot: lotNumber,
			units: [
				{ ...bad, points: [{ biasV: 1, resonanceHz: 'fast' }, { biasV: -2, resonanceHz: 1e6 }] },
				{ ...unit('U-ok') },
				{ ...bad, serial: '', testedAt: 'yesterday' },
				{ ...bad, kind: 'other', leakageA: -1 }
			]
		};
		const res = await post('/api/v1/results', body, { ...asStation(), 'idempotency-key': randomUUID() });
		expect(res.status).toBe(400);
		const paths = ((await res.json()) as { errors: { path: string }[] }).errors.map((e) => e.path).sort();
		expect(paths).toEqual(['units.0.points.0.resonanceHz', 'units.0.points.1.biasV', 'units.2.serial', 'units.2.testedAt', 'units.3.kind', 'units.3.leakageA']);
		expect(await tested()).toBe(0);
	});

	test('a missing Idempotency-Key is a 400', async () => {
		const res = await post('/api/v1/results', { lot: lotNumber, units: [unit('U-1')] }, asStation());
		expect(res.status).toBe(400);
		expect(await tested()).toBe(0);
	});

	test('a good batch gets a bin per part; a replay answers the same and stores nothing twice', async () => {
		const key = randomUUID();
		const body = JSON.stringify({ lot: lotNumber, units: [unit('U-1'), unit('U-2', 1.2)] });
		const first = await post('/api/v1/results', body, { ...asStation(), 'idempotency-key': key });
		expect(first.status).toBe(201);
		const answer = (await first.json()) as { results: { serial: string; bin: number; pass: boolean; capacitanceF: number[]; failures: { test: string }[] }[] };
		expect(answer.results.map((r) => [r.serial, r.pass])).toEqual([
			['U-1', true],
			['U-2', false]
		]);
		expect(answer.results[0]?.bin).toBe(1);
		// The recovered capacitance is the part's own, through stray and blocking capacitor.
		answer.results[0]?.capacitanceF.forEach((c, i) => expect(c / partF(BIASES[i] ?? 0)).toBeCloseTo(1, 6));
		expect(answer.results[1]?.failures.length).toBeGreaterThan(0);
		expect(await tested()).toBe(2);

		const again = await post('/api/v1/results', body, { ...asStation(), 'idempotency-key': key });
		expect(again.status).toBe(200);
		expect(again.headers.get('idempotent-replayed')).toBe('true');
		expect(await again.json()).toEqual(answer);
		expect(await tested()).toBe(2);

		const other = await post('/api/v1/results', { lot: lotNumber, units: [unit('U-3')] }, { ...asStation(), 'idempotency-key': key });
		expect(other.status).toBe(409);
		expect(((await other.json()) as { type: string }).type).toMatch(/idempotency-conflict$/);
		expect(await tested()).toBe(2);
	});

	test('ten concurrent posts with one key store the batch once', async () => {
		const key = randomUUID();
		const body = JSON.stringify({ lot: lotNumber, units: [unit('C-1'), unit('C-2'), unit('C-3')] });
		const before = await tested();
		const answers = await Promise.all(Array.from({ length: 10 }, () => post('/api/v1/results', body, { ...asStation(), 'idempotency-key': key })));
		const statuses = answers.map((a) => a.status).sort();
		expect(statuses).toEqual([200, 200, 200, 200, 200, 200, 200, 200, 200, 201]);
		expect(await tested()).toBe(before + 3);
	});

	test('an unknown lot is a 404 and a closed lot a 409, storing nothing', async () => {
		const before = await tested();
		const unknown = await post('/api/v1/results', { lot: 'NO-SUCH-LOT', units: [unit('N-1')] }, { ...asStation(), 'idempotency-key': randomUUID() });
		expect(unknown.status).toBe(404);
		const closedLot = `${lotNumber}-C`;
		expect((await post('/api/v1/lots', { number: closedLot, productCode: code, quantity: 10 }, { cookie: admin })).status).toBe(201);
		const close = await fetch(`${baseUrl()}/api/v1/lots/${closedLot}`, { method: 'PATCH', headers: { cookie: admin, 'content-type': 'application/json' }, body: JSON.stringify({ status: 'closed' }) });
		expect(close.status).toBe(200);
		const closed = await post('/api/v1/results', { lot: closedLot, units: [unit('N-2')] }, { ...asStation(), 'idempotency-key': randomUUID() });
		expect(closed.status).toBe(409);
		expect(await tested()).toBe(before);
	});

	test('a body over the size limit is a 413 problem', async () => {
		const huge = JSON.stringify({ lot: lotNumber, units: [unit('H-1')], pad: 'x'.repeat(1_100_000) });
		const res = await post('/api/v1/results', huge, { ...asStation(), 'idempotency-key': randomUUID() });
		expect(res.status).toBe(413);
	});

	test('reference parts are stored but never count toward yield', async () => {
		const before = await tested();
		const ref = { ...unit('REF-T'), kind: 'reference' };
		const res = await post('/api/v1/results', { lot: lotNumber, units: [ref] }, { ...asStation(), 'idempotency-key': randomUUID() });
		expect(res.status).toBe(201);
		expect(await tested()).toBe(before);
		const page = await fetch(`${baseUrl()}/api/v1/lots/${lotNumber}/units?limit=1`, { headers: { cookie: admin } });
		expect(((await page.json()) as { units: { serial: string; kind: string }[] }).units[0]).toMatchObject({ serial: 'REF-T', kind: 'reference' });
	});

	test('an expired calibration refuses results again', async () => {
		const station = await post('/api/v1/stations', { name: `T-${tag}-x`, fixture: FIXTURE, calibration: { validityHours: 0.0004 } }, { cookie: admin });
		const t = ((await station.json()) as { token: string }).token;
		expect((await calibrate(t)).status).toBe(201);
		await new Promise((r) => setTimeout(r, 1700));
		const res = await post('/api/v1/results', { lot: lotNumber, units: [unit('E-1')] }, { ...asStation(t), 'idempotency-key': randomUUID() });
		expect(res.status).toBe(409);
	});

	test('a revoked token is refused at once', async () => {
		const station = await post('/api/v1/stations', { name: `T-${tag}-r`, fixture: FIXTURE }, { cookie: admin });
		const created = (await station.json()) as { id: number; token: string };
		expect((await fetch(`${baseUrl()}/api/v1/station`, { headers: asStation(created.token) })).status).toBe(200);
		const revoke = await fetch(`${baseUrl()}/api/v1/stations/${created.id}/token`, { method: 'DELETE', headers: { cookie: admin } });
		expect(revoke.status).toBe(204);
		expect((await fetch(`${baseUrl()}/api/v1/station`, { headers: asStation(created.token) })).status).toBe(401);
	});
});

describe('CSV export', () => {
	test('the lot’s parts as CSV with a header and one row per part', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/lots/${lotNumber}/units.csv`, { headers: { cookie: admin } });
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toContain('text/csv');
		const lines = (await res.text()).trim().split('\r\n');
		expect(lines[0]).toContain('capacitanceF@1V');
		const json = await fetch(`${baseUrl()}/api/v1/lots/${lotNumber}/units?limit=1000`, { headers: { cookie: admin } });
		expect(lines.length - 1).toBe(((await json.json()) as { total: number }).total);
	});
});
