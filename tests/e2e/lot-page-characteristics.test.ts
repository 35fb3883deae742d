// The lot page's characteristics (kept between loads of an unchanged lot): the Cpk of every
// characteristic on the page equals the capability module's (tested against its references in
// src/lib/spc) on the posted parts in test order, on a repeat load, and again after one more part
// is posted, on both instances; the part count follows.
import { beforeAll, describe, expect, test } from 'vitest';
import { capability } from '$lib/spc/capability';
import { baseUrl, baseUrlB, cookieOnce } from './helpers';
import type { TestLine } from './line';
import { LOT_PLAN, lotLine, postLotParts, type PostedPart } from './lots-support';

let line: TestLine;
let posted: PostedPart[] = [];

beforeAll(async () => {
	line = await lotLine('LOTC');
	posted = await postLotParts(line, 60);
});

type PageFigures = { parts: number; cpk: Map<string, number | null> };

async function pageFigures(base: string): Promise<PageFigures> {
	const res = await fetch(`${base}/lots/${encodeURIComponent(line.lotNumber)}`, { headers: { cookie: await cookieOnce('engineer'), accept: 'text/html' } });
	expect(res.status).toBe(200);
	const html = await res.text();
	const parts = /From ([\d,]+) production parts/.exec(html)?.[1];
	expect(parts).toBeDefined();
	const cpk = new Map<string, number | null>();
	for (const m of html.matchAll(/data-characteristic="([^"]+)"[\s\S]*?data-cpk="([^"]*)"/g)) cpk.set(m[1] ?? '', m[2] ? Number(m[2]) : null);
	return { parts: Number((parts ?? '').replaceAll(',', '')), cpk };
}

/** Cpk of C at 1 V, C at 4 V (pF) and their ratio over the parts, as the page defines them (production parts, test order). */
function expectedCpk(parts: PostedPart[]): Map<string, number | null> {
	const [p1, p4] = LOT_PLAN.points;
	const c1 = parts.map((p) => (p.capacitanceF[0] ?? Number.NaN) * 1e12);
	const c4 = parts.map((p) => (p.capacitanceF[1] ?? Number.NaN) * 1e12);
	const ratio = parts.map((p) => (p.capacitanceF[0] ?? Number.NaN) / (p.capacitanceF[1] ?? Number.NaN));
	const cpk = (values: number[], spec: { lowerSpecLimit?: number; upperSpecLimit?: number }) => {
		// The page's rule: a spread below a part in 10⁹ of the mean is rounding, and gets no indices
		// (the test parts are one junction scaled, so their ratio is such a constant).
		const mean = values.reduce((a, v) => a + v, 0) / values.length;
		const sd = Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / (values.length - 1));
		if (sd <= 1e-9 * Math.abs(mean)) return null;
		const r = capability(values, spec, { processInControl: true });
		return r.ok ? r.value.cpk.value : null;
	};
	return new Map([
		['C@1V', cpk(c1, { lowerSpecLimit: (p1?.minF ?? 0) * 1e12, upperSpecLimit: (p1?.maxF ?? 0) * 1e12 })],
		['C@4V', cpk(c4, { lowerSpecLimit: (p4?.minF ?? 0) * 1e12, upperSpecLimit: (p4?.maxF ?? 0) * 1e12 })],
		['ratio', cpk(ratio, { lowerSpecLimit: LOT_PLAN.ratio.min })]
	]);
}

function expectFigures(page: PageFigures, parts: PostedPart[]) {
	expect(page.parts).toBe(parts.length);
	const want = expectedCpk(parts);
	expect([...page.cpk.keys()]).toEqual([...want.keys()]);
	expect(want.get('C@1V')).not.toBeNull();
	expect(want.get('C@4V')).not.toBeNull();
	for (const [key, value] of want) {
		if (value === null) expect(page.cpk.get(key), key).toBeNull();
		else expect(page.cpk.get(key), key).toBeCloseTo(value, 9);
	}
}

describe('lot page characteristics', () => {
	test('equal the capability of the posted parts, on a first and a repeat load', async () => {
		const first = await pageFigures(baseUrl());
		expectFigures(first, posted);
		const again = await pageFigures(baseUrl());
		expect(again).toEqual(first);
	});

	test('after one more part, both instances (each keeping the lot figures) show it on their next load', async () => {
		const before = await pageFigures(baseUrl());
		await pageFigures(baseUrlB());
		// One part 1.5 % high: still good, and it moves every mean and spread.
		const answer = (await line.post([line.part(0.015)])) as unknown as { results: PostedPart[] };
		const now = [...posted, ...answer.results];
		posted = now;
		for (const base of [baseUrl(), baseUrlB()]) {
			const after = await pageFigures(base);
			expectFigures(after, now);
			expect(after.cpk.get('C@1V')).not.toBe(before.cpk.get('C@1V'));
		}
	});
});

describe('lot units API (read in the lot index order)', () => {
	type UnitsAnswer = { total: number; units: { serial: string; bin: number }[] };
	const units = async (q: string) => {
		const res = await fetch(`${baseUrl()}/api/v1/lots/${encodeURIComponent(line.lotNumber)}/units${q}`, { headers: { cookie: await cookieOnce('operator') } });
		expect(res.status).toBe(200);
		return (await res.json()) as UnitsAnswer;
	};
	const newestFirst = () => posted.map((p) => p.serial).reverse();

	test('every part newest first, and offset pages are slices of that order', async () => {
		const all = await units('?limit=1000');
		expect(all.total).toBe(posted.length);
		expect(all.units.map((u) => u.serial)).toEqual(newestFirst());
		const page = await units('?limit=7&offset=7');
		expect(page.units.map((u) => u.serial)).toEqual(newestFirst().slice(7, 14));
	});

	test('one bin: exactly its parts, newest first', async () => {
		const failing = posted.filter((p) => p.bin === 2).map((p) => p.serial).reverse();
		expect(failing.length).toBeGreaterThan(0);
		const page = await units('?bin=2&limit=1000');
		expect(page.total).toBe(failing.length);
		expect(page.units.map((u) => u.serial)).toEqual(failing);
		expect((await units('?bin=2&limit=2&offset=1')).units.map((u) => u.serial)).toEqual(failing.slice(1, 3));
	});
});
