// The chart explorer in Chromium: stations side by side chosen in the browser (kept in the URL),
// one shared y scale on request, and a time range from the URL.
import { randomUUID } from 'node:crypto';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce, launch, signedInPage, SIZES } from './helpers';
import { jsonInit, setUpLine, TEST_FIXTURE, type TestLine } from './line';
import { abruptPartF, referenceReadings } from './physics';

const BIASES = [1, 4];
const plan = { points: BIASES.map((v) => ({ biasV: v, minF: abruptPartF(v) * 0.9, maxF: abruptPartF(v) * 1.1 })), spc: { baselineParts: 5 } };
let browser: Browser;
let line: TestLine;
let other = '';

beforeAll(async () => {
	browser = await launch();
	line = await setUpLine({ prefix: 'EXP', plan, biases: BIASES });
	await line.post(Array.from({ length: 6 }, (_, i) => line.part(i % 2 ? 0.003 : -0.003)));
	other = `EXP2-${randomUUID().slice(0, 8)}`;
	const st = await fetch(`${baseUrl()}/api/v1/stations`, jsonInit(await cookieOnce('admin'), 'POST', { name: other, fixture: TEST_FIXTURE }));
	const token = ((await st.json()) as { token: string }).token;
	const auth = { 'content-type': 'application/json', authorization: `Bearer ${token}` };
	await fetch(`${baseUrl()}/api/v1/calibrations`, { method: 'POST', headers: auth, body: JSON.stringify({ references: referenceReadings(TEST_FIXTURE) }) });
	// The other station reads 3 % high: its own y scale hides that, the shared one shows it.
	const res = await fetch(`${baseUrl()}/api/v1/results`, {
		method: 'POST',
		headers: { ...auth, 'idempotency-key': randomUUID() },
		body: JSON.stringify({ lot: line.lotNumber, units: Array.from({ length: 6 }, (_, i) => line.part(0.03 + (i % 2 ? 0.003 : -0.003))) })
	});
	expect(res.status).toBe(201);
});
afterAll(async () => {
	await browser?.close();
});

describe('chart explorer', () => {
	test('ticking stations puts them side by side and in the URL; a shared scale gives every panel the same y ticks', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[1]);
		await page.goto(`${baseUrl()}/charts?product=${line.code}&station=${line.stationName}&kind=production&characteristic=C@4V`, { waitUntil: 'networkidle' });
		await page.locator(`[data-side-station="${line.stationName}"]`).check();
		await expect.poll(() => new URL(page.url()).searchParams.get('stations')).toBe(line.stationName);
		await page.locator(`[data-side-station="${other}"]`).check();
		// Listed in the charts' order (by station name), whatever order they were ticked in.
		await expect.poll(() => new URL(page.url()).searchParams.get('stations')?.split(',').sort().join(',')).toBe([line.stationName, other].sort().join(','));
		expect(new URL(page.url()).searchParams.get('characteristic')).toBe('C@4V');
		const ticks = (station: string) => page.locator(`[data-side-chart="${station}"] svg g[aria-hidden] text.tabular`).allTextContents();
		await expect.poll(async () => (await ticks(other)).length).toBeGreaterThan(0);
		expect(await ticks(other)).not.toEqual(await ticks(line.stationName));
		await page.locator('[data-shared-scale]').check();
		await expect.poll(() => new URL(page.url()).searchParams.get('shared')).toBe('1');
		await expect.poll(async () => JSON.stringify((await ticks(other)).filter((t) => t.includes('.')))).toBe(JSON.stringify((await ticks(line.stationName)).filter((t) => t.includes('.'))));
		await page.context().close();
	});

	test('a time range in the URL limits the points; the main chart keeps the part of a picked point', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[0]);
		await page.goto(`${baseUrl()}/charts?product=${line.code}&station=${line.stationName}&kind=production&to=2020-01-01`, { waitUntil: 'networkidle' });
		expect(await page.locator('#range-to').inputValue()).toBe('2020-01-01');
		expect(await page.locator('[data-panel=individuals] circle[r="2.5"]').count()).toBe(0);
		await page.click('button:has-text("All time")');
		await expect.poll(() => page.locator('[data-panel=individuals] circle[r="2.5"]').count()).toBe(6);
		expect(new URL(page.url()).searchParams.get('to')).toBeNull();
		await page.locator('[data-panel=individuals] circle[r="2.5"]').nth(1).scrollIntoViewIfNeeded();
		const dot = await page.locator('[data-panel=individuals] circle[r="2.5"]').nth(1).boundingBox();
		await page.mouse.click((dot?.x ?? 0) + (dot?.width ?? 0) / 2, (dot?.y ?? 0) + (dot?.height ?? 0) / 2);
		const link = page.locator('[data-picked-point] [data-open-part]');
		await expect.poll(() => link.count()).toBe(1);
		await link.click();
		await page.waitForURL(/\/parts\/\d+$/);
		expect(await page.locator('h1').textContent()).toContain(line.lotNumber);
		await page.context().close();
	});
});
