import { randomUUID } from 'node:crypto';
import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, launch, PEOPLE, screenshotDir } from './helpers';
import { setUpLine, type TestLine } from './line';
import { pF } from './physics';

let browser: Browser;
let line: TestLine;

beforeAll(async () => {
	browser = await launch();
	const lineName = `Line T-${randomUUID().slice(0, 6)}`;
	line = await setUpLine({ prefix: 'FLR', biases: [1, 4], line: lineName, plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }] } });
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
		const tile = page.locator(`[data-station="${line.stationName}"]`);
		expect(await tile.locator('[data-state]').getAttribute('data-state')).toBe('offline');
		await expect.poll(() => page.locator('[data-live="true"]').count()).toBe(1);
		// The stream is open; a station posts five good parts and one that fails at 1 V.
		await line.post([0, 0, 0, 0, 0, 0.4].map((shift) => line.part(shift)));
		await expect.poll(() => tile.locator('[data-figure=rate]').textContent(), { timeout: 10_000 }).toBe('6');
		expect((await tile.locator('[data-figure=yield]').textContent())?.trim()).toBe(`${((100 * 5) / 6).toFixed(1)}%`);
		expect(await tile.locator('[data-state]').getAttribute('data-state')).toBe('testing');
		expect(await tile.textContent()).toContain(line.lotNumber);
		await page.screenshot({ path: path.join(screenshotDir(), 'floor-live-1920.png'), fullPage: true });
		await page.setViewportSize({ width: 1366, height: 768 });
		await page.screenshot({ path: path.join(screenshotDir(), 'floor-live-1366.png') });
		await context.close();
	});
});
