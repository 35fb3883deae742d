// Acceptance in Chromium: a bench file with one bad row shows that row's error and imports
// nothing; fixed, it imports with the progress bar at 100 % and the lot's count rising. Then the
// station page draws its trends and throughput, and a click on a chart point opens the part.
// Capacitances from the test junction of physics.ts (SPICE depletion form).
import { randomUUID } from 'node:crypto';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce, launch, screenshotDir, signedInPage, SIZES } from './helpers';
import { jsonInit, setUpLine, TEST_FIXTURE, type TestLine } from './line';
import { abruptPartF, referenceReadings } from './physics';

const BIASES = [1, 2, 4, 8];
const plan = { points: BIASES.map((v) => ({ biasV: v, minF: abruptPartF(v) * 0.95, maxF: abruptPartF(v) * 1.05 })), spc: { baselineParts: 5, referenceBaselineParts: 5 } };
let browser: Browser;
let line: TestLine;
let second = '';

function benchCsv(prefix: string, n: number): string {
	const rows = ['serial,biasV,capacitanceF,temperatureC'];
	for (let k = 0; k < n; k++) BIASES.forEach((v) => rows.push(`${prefix}-${k},${v},${abruptPartF(v).toExponential(6)},23.5`));
	return rows.join('\n') + '\n';
}
async function tested(lot: string): Promise<number> {
	const res = await fetch(`${baseUrl()}/api/v1/lots/${lot}`, { headers: { cookie: await cookieOnce('engineer') } });
	return ((await res.json()) as { tested: number }).tested;
}
async function shot(page: Page, name: string) {
	await page.evaluate(() => window.scrollTo(0, 0));
	await page.screenshot({ path: path.join(screenshotDir(), `${name}.png`), fullPage: true });
}

beforeAll(async () => {
	browser = await launch();
	line = await setUpLine({ prefix: 'UPB', plan, biases: BIASES });
	const parts = Array.from({ length: 8 }, (_, i) => line.part((i % 3) * 0.004 - 0.004));
	await line.post(parts);
	await line.post([0, 1, 2].map(() => ({ ...line.part(0.001), kind: 'reference' as const })));
	// A second station on the same lot, so the explorer has stations to put side by side.
	second = `UPB2-${randomUUID().slice(0, 8)}`;
	const st = await fetch(`${baseUrl()}/api/v1/stations`, jsonInit(await cookieOnce('admin'), 'POST', { name: second, fixture: TEST_FIXTURE }));
	const token = ((await st.json()) as { token: string }).token;
	const auth = { 'content-type': 'application/json', authorization: `Bearer ${token}` };
	expect((await fetch(`${baseUrl()}/api/v1/calibrations`, { method: 'POST', headers: auth, body: JSON.stringify({ references: referenceReadings(TEST_FIXTURE) }) })).status).toBe(201);
	const res = await fetch(`${baseUrl()}/api/v1/results`, {
		method: 'POST',
		headers: { ...auth, 'idempotency-key': randomUUID() },
		body: JSON.stringify({ lot: line.lotNumber, units: Array.from({ length: 6 }, (_, i) => line.part(i * 0.002)) })
	});
	expect(res.status).toBe(201);
});
afterAll(async () => {
	await browser?.close();
});

describe('bench upload, station trends and part page in Chromium', () => {
	test('one bad row: its error with the line number, nothing imported; fixed: imported with the bar at 100 %', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[1]);
		await page.goto(`${baseUrl()}/uploads?lot=${line.lotNumber}`, { waitUntil: 'networkidle' });
		expect(await page.locator('#up-lot').inputValue()).toBe(line.lotNumber);
		const before = await tested(line.lotNumber);
		const bad = benchCsv('BEN', 3).split('\n');
		bad[6] = 'BEN-1,2,<b>18e-12</b>,23.5'; // line 7: markup where a number belongs
		await page.setInputFiles('#up-file', { name: 'bench-bad.csv', mimeType: 'text/csv', buffer: Buffer.from(bad.join('\n')) });
		await page.click('button:has-text("Check the file")');
		const err = page.locator('[data-error-line="7"]');
		await expect.poll(() => err.count()).toBe(1);
		expect(await err.textContent()).toContain('capacitanceF “<b>18e-12</b>” is not a number');
		expect(await page.locator('[data-row-errors] li').count()).toBe(1);
		// The file's text is shown as text, never as markup.
		expect(await page.locator('[data-preview-line="7"] b').count()).toBe(0);
		expect(await page.locator('[data-preview-line="7"]').textContent()).toContain('<b>18e-12</b>');
		expect(await page.locator('[data-import]').count()).toBe(0);
		await shot(page, 'uploads-bad-row-1920');
		expect(await tested(line.lotNumber)).toBe(before);

		await page.setInputFiles('#up-file', { name: 'bench-fixed.csv', mimeType: 'text/csv', buffer: Buffer.from(benchCsv('BEN', 3)) });
		await page.click('button:has-text("Check the file")');
		await page.locator('[data-import]').click();
		await expect.poll(() => page.locator('[role=progressbar]').getAttribute('aria-valuenow')).toBe('100');
		await expect.poll(() => page.locator('[data-lot-tested]').getAttribute('data-lot-tested')).toBe(String(before + 3));
		expect(await page.locator('[data-upload-message]').textContent()).toContain(`3 bench parts imported into lot ${line.lotNumber}`);
		expect(await tested(line.lotNumber)).toBe(before + 3);
		await shot(page, 'uploads-imported-1920');
		await page.setViewportSize(SIZES[0]);
		await shot(page, 'uploads-imported-1366');
		await page.context().close();
	});

	test('the station page draws L and stray per calibration, the reference part and parts per hour', async () => {
		for (const viewport of SIZES) {
			const page = await signedInPage(browser, 'operator', viewport);
			await page.goto(`${baseUrl()}/stations/${line.stationName}`, { waitUntil: 'networkidle' });
			const trends = page.locator('[data-station-trends]');
			await expect.poll(() => trends.locator('[data-panel=trend-inductance] circle[r="2.5"]').count()).toBe(1);
			expect(await trends.locator('[data-panel=trend-stray] circle[r="2.5"]').count()).toBe(1);
			// 8 production + 3 reference parts were posted this hour; bench parts have no station.
			expect(await trends.locator('[data-throughput]').getAttribute('data-total')).toBe('11');
			expect(await trends.locator('rect[data-parts="11"]').count()).toBe(1);
			const ref = trends.locator('[data-panel^="reference-"]');
			expect(await ref.count()).toBe(BIASES.length);
			await expect.poll(() => ref.first().locator('circle[r="2.5"]').count()).toBe(3);
			await shot(page, `station-trends-${viewport.width}`);
			await page.context().close();
		}
	});

	test('a click on a point of the side-by-side charts opens its part page', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[1]);
		await page.goto(`${baseUrl()}/charts?product=${line.code}&station=${line.stationName}&kind=production&characteristic=C@1V&stations=${line.stationName},${second}&shared=1`, { waitUntil: 'networkidle' });
		const panel = page.locator(`[data-side-chart="${second}"]`);
		await expect.poll(() => panel.locator('circle[r="2.5"]').count()).toBe(6);
		expect(await page.locator(`[data-side-chart="${line.stationName}"] circle[r="2.5"]`).count()).toBe(8);
		await shot(page, 'charts-side-by-side-1920');
		// Mouse clicks land only inside the viewport: bring the panel into view first.
		await panel.locator('circle[r="2.5"]').nth(2).scrollIntoViewIfNeeded();
		const dot = await panel.locator('circle[r="2.5"]').nth(2).boundingBox();
		expect(dot).not.toBeNull();
		await page.mouse.click((dot?.x ?? 0) + (dot?.width ?? 0) / 2, (dot?.y ?? 0) + (dot?.height ?? 0) / 2);
		await page.waitForURL(/\/parts\/\d+$/);
		const id = Number(new URL(page.url()).pathname.split('/').at(-1));
		const api = await fetch(`${baseUrl()}/api/v1/units/${id}`, { headers: { cookie: await cookieOnce('engineer') } });
		const part = ((await api.json()) as { part: { serial: string; station: { name: string } } }).part;
		expect(part.station.name).toBe(second);
		expect(await page.locator('h1').textContent()).toContain(part.serial);
		expect(await page.locator('[data-fact=Lot] a').getAttribute('href')).toBe(`/lots/${line.lotNumber}`);
		expect(await page.locator('table[aria-label=Sweep] tbody tr').count()).toBe(BIASES.length);
		expect(await page.locator('table[aria-label=Sweep] th').allTextContents()).toEqual(['Bias (V)', 'Resonance', 'Bandwidth', 'Capacitance (pF)', 'Q']);
		expect(await page.locator('[data-cv-overlay]').count()).toBe(1);
		// The fitted model is drawn as its own dashed line, and the caption still counts one part.
		expect(await page.locator('[data-cv-overlay] [data-fit-curve]').count()).toBe(1);
		expect(await page.locator('[data-cv-overlay] figcaption').textContent()).toMatch(/^\s*1 part\b/);
		expect(await page.locator('[data-fit=cj0]').textContent()).toMatch(/\d+\.\d{3} pF/);
		await shot(page, 'part-1920');
		await page.setViewportSize(SIZES[0]);
		await shot(page, 'part-1366');
		await page.context().close();
	});
});
