import { randomUUID } from 'node:crypto';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieFor, launch, PEOPLE, screenshotDir } from './helpers';
import { abruptPartF, pF, referenceReadings, resonanceHz, type TestFixture } from './physics';

const FIXTURE: TestFixture = { inductanceH: 100e-6, strayF: 3 * pF, blockingF: 100e-9, arrangement: 'single' };
const tag = randomUUID().slice(0, 6);
const stationName = `F-${tag}`;
const lotNumber = `LT-F-${tag}`;
let token = '';
let browser: Browser;

async function post(path: string, body: unknown, headers: Record<string, string>) {
	return fetch(baseUrl() + path, { method: 'POST', headers: { 'content-type': 'application/json', ...headers }, body: JSON.stringify(body) });
}

beforeAll(async () => {
	browser = await launch();
	const [admin, engineer] = await Promise.all([cookieFor('admin'), cookieFor('engineer')]);
	const code = `FLR-${tag}`;
	expect((await post('/api/v1/products', { code, name: 'Floor test', plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }] } }, { cookie: engineer })).status).toBe(201);
	const st = await post('/api/v1/stations', { name: stationName, line: `Line T-${tag}`, fixture: FIXTURE }, { cookie: admin });
	token = ((await st.json()) as { token: string }).token;
	expect((await post('/api/v1/lots', { number: lotNumber, productCode: code, quantity: 100 }, { cookie: engineer })).status).toBe(201);
	expect((await post('/api/v1/calibrations', { references: referenceReadings(FIXTURE) }, { authorization: `Bearer ${token}` })).status).toBe(201);
});
afterAll(async () => {
	await browser?.close();
});

describe('the live floor', () => {
	test('an operator’s tile updates when its station posts, without a reload', async () => {
		const context = await browser.newContext({ viewport: { width: 1920, height: 1080 } });
		const page = await context.newPage();
		await page.goto(`${baseUrl()}/login`);
		await page.fill('input[name=email]', PEOPLE.operator.email);
		await page.fill('input[name=password]', PEOPLE.operator.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL(/\/floor$/);
		const tile = page.locator(`[data-station="${stationName}"]`);
		expect(await tile.locator('[data-state]').getAttribute('data-state')).toBe('offline');
		await expect.poll(() => page.locator('[data-live="true"]').count()).toBe(1);
		// The stream is open; a station posts five good parts and one that fails at 1 V.
		const units = [1, 1, 1, 1, 1, 1.4].map((shift, i) => ({
			serial: `${lotNumber}-${i}`,
			testedAt: new Date().toISOString(),
			points: [1, 4].map((v) => ({ biasV: v, resonanceHz: resonanceHz(FIXTURE, abruptPartF(v) * shift) }))
		}));
		const res = await post('/api/v1/results', { lot: lotNumber, units }, { authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() });
		expect(res.status).toBe(201);
		await expect.poll(() => tile.locator('[data-figure=rate]').textContent(), { timeout: 10_000 }).toBe('6');
		expect((await tile.locator('[data-figure=yield]').textContent())?.trim()).toBe(`${((100 * 5) / 6).toFixed(1)}%`);
		expect(await tile.locator('[data-state]').getAttribute('data-state')).toBe('testing');
		expect(await tile.textContent()).toContain(lotNumber);
		await page.screenshot({ path: path.join(screenshotDir(), 'floor-live-1920.png'), fullPage: true });
		await page.setViewportSize({ width: 1366, height: 768 });
		await page.screenshot({ path: path.join(screenshotDir(), 'floor-live-1366.png') });
		await context.close();
	});
});
