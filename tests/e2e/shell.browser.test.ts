import path from 'node:path';
import type { Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, launch, PEOPLE, screenshotDir } from './helpers';

let browser: Browser;
beforeAll(async () => {
	browser = await launch();
});
afterAll(async () => {
	await browser?.close();
});

const SIZES = [
	{ width: 1366, height: 768 },
	{ width: 1920, height: 1080 }
];

async function signInPage(viewport: { width: number; height: number } = { width: 1366, height: 768 }) {
	const context = await browser.newContext({ viewport });
	const page = await context.newPage();
	await page.goto(`${baseUrl()}/login`);
	return { context, page };
}

describe('sign-in and the shell in Chromium', () => {
	test('a wrong password shows a clear message on the page and stays signed out', async () => {
		const { context, page } = await signInPage();
		await page.fill('input[name=email]', PEOPLE.operator.email);
		await page.fill('input[name=password]', 'not the password');
		await page.click('button:has-text("Sign in")');
		await expect.poll(() => page.locator('[role=alert]').textContent()).toContain('E-mail or password is not right');
		expect(new URL(page.url()).pathname).toBe('/login');
		await context.close();
	});

	test('an empty form shows the message beside each field', async () => {
		const { context, page } = await signInPage();
		await page.click('button:has-text("Sign in")');
		await expect.poll(() => page.locator('#f-email-err').textContent()).toContain('Enter your e-mail address');
		expect(await page.locator('#f-password-err').textContent()).toContain('Enter your password');
		await context.close();
	});

	test('an operator signs in and sees the shell with only the areas of the role', async () => {
		for (const viewport of SIZES) {
			const { context, page } = await signInPage(viewport);
			await page.screenshot({ path: path.join(screenshotDir(), `login-${viewport.width}.png`) });
			await page.fill('input[name=email]', PEOPLE.operator.email);
			await page.fill('input[name=password]', PEOPLE.operator.password);
			await page.click('button:has-text("Sign in")');
			await page.waitForURL(/\/floor$/);
			const nav = await page.locator('nav[aria-label=Areas] a').allTextContents();
			expect(nav.map((t) => t.trim())).toEqual(['Floor', 'Lots', 'Stations', 'Alarms']);
			expect(await page.locator('h1').textContent()).toContain('Floor');
			// The demo's six stations (other tests may add more to this database).
			for (const name of ['A-01', 'A-02', 'A-03', 'B-01', 'B-02', 'B-03']) expect(await page.locator(`[data-station="${name}"]`).count()).toBe(1);
			await page.screenshot({ path: path.join(screenshotDir(), `floor-operator-${viewport.width}.png`) });
			await context.close();
		}
	});

	test('an admin sees every area; bad input on the add-person form is shown beside the field and adds nobody', async () => {
		const { context, page } = await signInPage(SIZES[1]);
		await page.fill('input[name=email]', PEOPLE.admin.email);
		await page.fill('input[name=password]', PEOPLE.admin.password);
		await page.click('button:has-text("Sign in")');
		await page.waitForURL(/\/floor$/);
		const nav = await page.locator('nav[aria-label=Areas] a').allTextContents();
		expect(nav.map((t) => t.trim())).toEqual(['Floor', 'Lots', 'Stations', 'Charts', 'Uploads', 'Alarms', 'Products', 'Studies', 'Audit', 'Admin']);
		await page.goto(`${baseUrl()}/admin`);
		const before = await page.locator('tr[data-user]').count();
		await page.fill('#f-name', 'Half Filled');
		await page.fill('#f-email', 'not-an-email');
		await page.fill('#f-password', 'short');
		await page.click('button:has-text("Add person")');
		await expect.poll(() => page.locator('#f-email-err').textContent()).toContain('valid e-mail');
		expect(await page.locator('#f-password-err').textContent()).toContain('12 characters');
		expect(await page.inputValue('#f-name')).toBe('Half Filled');
		await page.reload();
		expect(await page.locator('tr[data-user]').count()).toBe(before);
		await page.screenshot({ path: path.join(screenshotDir(), 'admin-1920.png') });
		for (const area of ['lots', 'stations', 'products', 'charts', 'alarms']) {
			await page.goto(`${baseUrl()}/${area}`);
			await page.screenshot({ path: path.join(screenshotDir(), `${area}-1920.png`) });
		}
		await context.close();
	});
});
