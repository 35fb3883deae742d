import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce } from './helpers';
import { setUpLine, type TestLine } from './line';
import { pF } from './physics';

// A station's post reads its charts without a lock and writes them only where they still hold
// what was read; a post that meets another one's writes is judged again from a fresh read. Here
// one station sends many posts at once (handlers of one station, or retries that overlap): every
// part must be stored once and charted once, each chart numbered 0, 1, 2, … without a gap or a
// repeat, and the chart's count must equal its points. (Consistency checks of our own; no
// outside reference is involved: the numbers compared are counts.)

const POSTS = 8;
const PER_POST = 5;
const BASELINE_PARTS = 10;

let engineer = '';
let line: TestLine;

beforeAll(async () => {
	engineer = await cookieOnce('engineer');
	line = await setUpLine({
		prefix: 'CONC',
		biases: [1, 4],
		plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }], spc: { baselineParts: BASELINE_PARTS } }
	});
	// Spread of ±0.2 %, so the baseline freezes limits with a non-zero sigma.
	await line.post(Array.from({ length: BASELINE_PARTS }, (_, i) => line.part(((i % 5) - 2) * 0.001)));
});

type Point = { seq: number; unitId: number; serial: string };

describe('one station posting several batches at once', () => {
	test(`${POSTS} posts of ${PER_POST} parts at once: every part stored and charted once, chart points numbered without gaps`, async () => {
		const batches = Array.from({ length: POSTS }, () => Array.from({ length: PER_POST }, (_, i) => line.part(((i % 3) - 1) * 0.001)));
		const answers = await Promise.all(batches.map((b) => line.post(b)));
		expect(answers.flatMap((a) => a.results).length).toBe(POSTS * PER_POST);

		const units = await fetch(`${baseUrl()}/api/v1/lots/${line.lotNumber}/units?limit=500`, { headers: { cookie: engineer } });
		expect(units.status).toBe(200);
		const stored = ((await units.json()) as { units: { serial: string }[] }).units.map((u) => u.serial);
		const sent = [...batches.flat().map((p) => p.serial)];
		for (const s of sent) expect(stored.filter((x) => x === s)).toHaveLength(1);

		const list = await fetch(`${baseUrl()}/api/v1/charts?station=${line.stationName}`, { headers: { cookie: engineer } });
		const charts = ((await list.json()) as { charts: { id: number; characteristic: string; pointCount: number }[] }).charts;
		expect(charts.map((c) => c.characteristic).sort()).toEqual(['C@1V', 'C@4V']);
		for (const c of charts) {
			const res = await fetch(`${baseUrl()}/api/v1/charts/${c.id}?view=imr&limit=1000`, { headers: { cookie: engineer } });
			expect(res.status).toBe(200);
			const points = ((await res.json()) as { points: Point[] }).points;
			const total = BASELINE_PARTS + POSTS * PER_POST;
			expect(points).toHaveLength(total);
			expect(c.pointCount).toBe(total);
			expect(points.map((p) => p.seq)).toEqual(Array.from({ length: total }, (_, i) => i));
			expect(new Set(points.map((p) => p.unitId)).size).toBe(total);
			for (const s of sent) expect(points.filter((p) => p.serial === s)).toHaveLength(1);
		}
	});
});
