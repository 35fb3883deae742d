// A test line of its own, through the public API: a product with the given plan, a calibrated
// station, an open lot, and helpers to post parts from it. Every name carries a random tag so
// test files never depend on each other's data.
import { randomUUID } from 'node:crypto';
import { expect } from 'vitest';
import { baseUrl, cookieOnce } from './helpers';
import { abruptPartF, pF, referenceReadings, resonanceHz, type TestFixture } from './physics';

export const TEST_FIXTURE: TestFixture = { inductanceH: 100e-6, strayF: 3.0 * pF, blockingF: 100e-9, arrangement: 'single' };

/** JSON request options with a session cookie. */
export const jsonInit = (cookie: string, method: string, body: unknown) => ({
	method,
	headers: { cookie, 'content-type': 'application/json' },
	body: JSON.stringify(body)
});

export type TestPart = { serial: string; testedAt: string; points: { biasV: number; resonanceHz: number }[] };

export type TestLine = {
	tag: string;
	code: string;
	productId: number;
	stationName: string;
	lotNumber: string;
	token: string;
	/** A part of the abrupt test junction scaled by (1 + relative), measured at `biases`. */
	part: (relative?: number) => TestPart;
	/** Posts parts from the line's station; expects 201 and returns the answer. */
	post: (parts: TestPart[]) => Promise<{ results: { serial: string; pass: boolean; bin: number }[] }>;
};

/** The admin adds a station with the fixture (default the test fixture) and it calibrates from its reference readings; returns its token. */
export async function addCalibratedStation(name: string, o: { fixture?: TestFixture; line?: string } = {}): Promise<string> {
	const fixture = o.fixture ?? TEST_FIXTURE;
	const st = await fetch(`${baseUrl()}/api/v1/stations`, jsonInit(await cookieOnce('admin'), 'POST', { name, ...(o.line ? { line: o.line } : {}), fixture }));
	expect(st.status).toBe(201);
	const token = ((await st.json()) as { token: string }).token;
	const cal = await fetch(`${baseUrl()}/api/v1/calibrations`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', authorization: `Bearer ${token}` },
		body: JSON.stringify({ references: referenceReadings(fixture) })
	});
	expect(cal.status).toBe(201);
	return token;
}

/** Creates the line: engineer adds the product, admin the station (then calibrated), operator the lot. */
export async function setUpLine(o: { prefix: string; plan: unknown; biases: number[]; line?: string }): Promise<TestLine> {
	const tag = randomUUID().slice(0, 8);
	const code = `${o.prefix}-${tag}`;
	const stationName = `${o.prefix}S-${tag}`;
	const lotNumber = `LT-${o.prefix}-${tag}`;
	const [engineer, operator] = await Promise.all([cookieOnce('engineer'), cookieOnce('operator')]);
	const product = await fetch(`${baseUrl()}/api/v1/products`, jsonInit(engineer, 'POST', { code, name: `${o.prefix} test part`, plan: o.plan }));
	expect(product.status).toBe(201);
	const productId = ((await product.json()) as { id: number }).id;
	const token = await addCalibratedStation(stationName, { line: o.line });
	expect((await fetch(`${baseUrl()}/api/v1/lots`, jsonInit(operator, 'POST', { number: lotNumber, productCode: code, quantity: 1000 }))).status).toBe(201);
	let n = 0;
	const part = (relative = 0): TestPart => {
		n++;
		return {
			serial: `${lotNumber}-${String(n).padStart(4, '0')}`,
			testedAt: new Date().toISOString(),
			points: o.biases.map((v) => ({ biasV: v, resonanceHz: resonanceHz(TEST_FIXTURE, abruptPartF(v) * (1 + relative)) }))
		};
	};
	const post = async (parts: TestPart[]) => {
		const res = await fetch(`${baseUrl()}/api/v1/results`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() },
			body: JSON.stringify({ lot: lotNumber, units: parts })
		});
		expect(res.status).toBe(201);
		return (await res.json()) as { results: { serial: string; pass: boolean; bin: number }[] };
	};
	return { tag, code, productId, stationName, lotNumber, token, part, post };
}
