import { randomUUID } from 'node:crypto';
import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, baseUrlB, cookieOnce } from './helpers';
import { addCalibratedStation, setUpLine, type TestLine } from './line';
import { pF } from './physics';

// The live stream of the contract: server-sent events (WHATWG HTML, "Server-sent events":
// fields `id`, `event`, `data`, blank line ends an event; `Last-Event-ID` on reconnect).

let cookie = '';
let line: TestLine;
let lotNumber = '';

type Sse = { id: number; event: string; data: Record<string, unknown> };

/** Opens the stream and collects events until `done` says stop (or the time runs out). */
async function collect(path: string, opts: { lastEventId?: number; until: (events: Sse[]) => boolean; timeoutMs?: number; onOpen?: () => Promise<void>; base?: string }) {
	const controller = new AbortController();
	const timer = setTimeout(() => controller.abort(), opts.timeoutMs ?? 10_000);
	const res = await fetch((opts.base ?? baseUrl()) + path, {
		headers: { cookie, accept: 'text/event-stream', ...(opts.lastEventId !== undefined ? { 'last-event-id': String(opts.lastEventId) } : {}) },
		signal: controller.signal
	});
	expect(res.status).toBe(200);
	expect(res.headers.get('content-type')).toContain('text/event-stream');
	const events: Sse[] = [];
	const reader = res.body?.getReader();
	if (!reader) throw new Error('no body');
	const decoder = new TextDecoder();
	let text = '';
	let opened = false;
	try {
		while (!opts.until(events)) {
			const { value, done } = await reader.read();
			if (done) break;
			text += decoder.decode(value, { stream: true });
			let end;
			while ((end = text.indexOf('\n\n')) >= 0) {
				const block = text.slice(0, end);
				text = text.slice(end + 2);
				const fields = Object.fromEntries(block.split('\n').filter((l) => !l.startsWith(':') && l.includes(': ')).map((l) => [l.slice(0, l.indexOf(': ')), l.slice(l.indexOf(': ') + 2)]));
				if (fields.event && fields.id) events.push({ id: Number(fields.id), event: fields.event, data: JSON.parse(fields.data ?? '{}') });
			}
			if (!opened && opts.onOpen) {
				opened = true;
				await opts.onOpen();
			}
		}
	} catch (e) {
		if (!controller.signal.aborted) throw e;
	} finally {
		clearTimeout(timer);
		controller.abort();
	}
	return events;
}

async function postBatch(count: number) {
	const parts = Array.from({ length: count }, () => line.part());
	await line.post(parts);
	return parts.map((u) => u.serial);
}

beforeAll(async () => {
	cookie = await cookieOnce('engineer');
	line = await setUpLine({ prefix: 'STR', biases: [1, 4], plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }] } });
	lotNumber = line.lotNumber;
});

describe('live stream', () => {
	test('signed out, the stream is refused', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/stream`);
		expect(res.status).toBe(401);
	});

	test('a posted batch arrives as one unit event per part and a yield event, each with an id', async () => {
		let serials: string[] = [];
		const events = await collect(`/api/v1/stream?lot=${lotNumber}`, {
			onOpen: async () => {
				serials = await postBatch(3);
			},
			until: (es) => es.filter((e) => e.event === 'unit').length >= 3 && es.some((e) => e.event === 'yield')
		});
		expect(events.filter((e) => e.event === 'unit').map((e) => e.data.serial)).toEqual(serials);
		const yieldEvent = events.find((e) => e.event === 'yield');
		expect(yieldEvent?.data).toMatchObject({ lot: lotNumber, lotTested: 3, lotPassed: 3, lotYieldPct: 100 });
		const ids = events.map((e) => e.id);
		expect([...ids].sort((a, b) => a - b)).toEqual(ids);
	});

	test('a client reconnecting with Last-Event-ID receives every event it missed, in order, once', async () => {
		const seen = await collect(`/api/v1/stream?lot=${lotNumber}`, {
			onOpen: async () => {
				await postBatch(2);
			},
			until: (es) => es.filter((e) => e.event === 'unit').length >= 1
		});
		const lastSeen = seen[0]?.id ?? 0;
		// Disconnected now; more parts arrive meanwhile.
		const missedSerials = await postBatch(4);
		const replay = await collect(`/api/v1/stream?lot=${lotNumber}`, {
			lastEventId: lastSeen,
			until: (es) => es.filter((e) => e.event === 'unit').length >= 5
		});
		const units = replay.filter((e) => e.event === 'unit').map((e) => e.data.serial);
		expect(units.slice(-4)).toEqual(missedSerials);
		expect(new Set(replay.map((e) => e.id)).size).toBe(replay.length);
		expect(replay.every((e) => e.id > lastSeen)).toBe(true);
	});

	test('the yield event counts the lot and the station’s rolling window including the batch’s failures', async () => {
		// A fresh line, so the expected counts are ours alone: 4 good parts, then 2 good and 2 far
		// below the 20–35 pF window at 1 V (0.2× the test junction's 26.5 pF is 5.3 pF).
		const own = await setUpLine({ prefix: 'STY', biases: [1, 4], plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }] } });
		await own.post([own.part(), own.part(), own.part(), own.part()]);
		const events = await collect(`/api/v1/stream?lot=${own.lotNumber}`, {
			onOpen: async () => {
				const answer = await own.post([own.part(), own.part(-0.8), own.part(), own.part(-0.8)]);
				expect(answer.results.map((r) => r.pass)).toEqual([true, false, true, false]);
			},
			until: (es) => es.some((e) => e.event === 'yield')
		});
		const y = events.find((e) => e.event === 'yield')?.data;
		expect(y).toMatchObject({ lot: own.lotNumber, station: own.stationName, lotTested: 8, lotPassed: 6, stationWindow: 8 });
		expect(y?.lotYieldPct).toBeCloseTo(75, 12);
		expect(y?.stationYieldPct).toBeCloseTo(75, 12);
	});

	test('ten stations posting to one lot at once: every event arrives once and in order, the lot counts every part once, yield events never overcount', async () => {
		const own = await setUpLine({ prefix: 'STM', biases: [1, 4], plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }] } });
		const tokens: string[] = [own.token];
		for (let i = 1; i < 10; i++) tokens.push(await addCalibratedStation(`${own.stationName}-${i}`));
		// Each station posts 3 batches of 4 parts, one of them failing (0.2× the nominal capacitance).
		const postAs = async (token: string, s: number, b: number) => {
			const parts = [0, 1, 2, 3].map((k) => ({ ...own.part(k === 3 ? -0.8 : 0), serial: `${own.lotNumber}-S${s}-B${b}-${k}` }));
			const res = await fetch(`${baseUrl()}/api/v1/results`, {
				method: 'POST',
				headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() },
				body: JSON.stringify({ lot: own.lotNumber, units: parts })
			});
			expect(res.status).toBe(201);
		};
		const events = await collect(`/api/v1/stream?lot=${own.lotNumber}`, {
			onOpen: async () => {
				await Promise.all(tokens.map(async (token, s) => {
					for (let b = 0; b < 3; b++) await postAs(token, s, b);
				}));
			},
			until: (es) => es.filter((e) => e.event === 'unit').length >= 120 && es.filter((e) => e.event === 'yield').length >= 30,
			timeoutMs: 20_000
		});
		// Concurrent posts commit in their own order, not in the order of their event ids: the
		// stream still delivers every event once, in id order.
		const units = events.filter((e) => e.event === 'unit');
		expect(units.length).toBe(120);
		expect(new Set(units.map((e) => e.data.serial)).size).toBe(120);
		expect(events.map((e) => e.id)).toEqual([...events.map((e) => e.id)].sort((a, b) => a - b));
		const lot = (await (await fetch(`${baseUrl()}/api/v1/lots/${own.lotNumber}`, { headers: { cookie } })).json()) as { tested: number; passed: number; bins: Record<string, number> };
		expect(lot.tested).toBe(120);
		expect(lot.passed).toBe(90);
		// A yield event counts what was committed when its post wrote: never more than the lot
		// holds, and at the end short by at most the other nine stations' batches still in flight
		// (each station has one post at a time). The floor reads exact figures from its API.
		const tested = events.filter((e) => e.event === 'yield').map((e) => Number(e.data.lotTested));
		expect(Math.max(...tested)).toBeLessThanOrEqual(120);
		expect(Math.max(...tested)).toBeGreaterThanOrEqual(120 - 9 * 4);
	});

	test('an unknown lot in ?lot= is a 404', async () => {
		const unknown = await fetch(`${baseUrl()}/api/v1/stream?lot=NO-SUCH-LOT`, { headers: { cookie } });
		expect(unknown.status).toBe(404);
	});

	test('two instances on one database: a part posted to one appears on the other’s stream', async () => {
		let serials: string[] = [];
		const events = await collect(`/api/v1/stream?lot=${lotNumber}`, {
			base: baseUrlB(),
			onOpen: async () => {
				serials = await postBatch(2); // posted to the first instance
			},
			until: (es) => es.filter((e) => e.event === 'unit').length >= 2
		});
		expect(events.filter((e) => e.event === 'unit').map((e) => e.data.serial)).toEqual(serials);
	});
});

