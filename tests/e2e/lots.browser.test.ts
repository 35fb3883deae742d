// The lot page in Chromium. Acceptance: an engineer holds a lot with a reason, releases it and
// downloads its certificate (read back with pdf.js: lot number, yield, the quality-system
// statement), e-mails it to a customer and the message with the PDF attached reaches the local
// test mail server; the parts table sorts, filters and pages by URL and by keyboard.
import { randomUUID } from 'node:crypto';
import fs from 'node:fs/promises';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { pdfPages } from '../support/pdf-text';
import { baseUrl, cookieOnce, launch, screenshotDir, signedInPage, SIZES } from './helpers';
import { jsonInit, type TestLine } from './line';
import { LOT_PLAN, lotLine, messageTo, pdfAttachment, postLotParts, type PostedPart } from './lots-support';

let browser: Browser;
let line: TestLine;
let posted: PostedPart[] = [];
const lotUrl = () => `${baseUrl()}/lots/${encodeURIComponent(line.lotNumber)}`;
const firstSerial = (page: Page) => page.locator('[data-parts-table] tbody tr').first().getAttribute('data-serial');
const serials = (page: Page) => page.locator('[data-parts-table] tbody tr').evaluateAll((rows) => rows.map((r) => r.getAttribute('data-serial') ?? ''));

beforeAll(async () => {
	browser = await launch();
	line = await lotLine('LOTB');
	posted = await postLotParts(line, 70);
	expect((await fetch(`${baseUrl()}/api/v1/lots/${encodeURIComponent(line.lotNumber)}`, jsonInit(await cookieOnce('operator'), 'PATCH', { status: 'closed' }))).status).toBe(200);
});
afterAll(async () => {
	await browser?.close();
});

describe('the lot page', () => {
	test('figures, Pareto, C–V sample with windows, and Cpk matching an independent computation', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[1]);
		await page.goto(lotUrl());
		const passed = posted.filter((p) => p.pass).length;
		expect(await page.locator('[data-figure=Tested]').textContent()).toBe('70');
		expect(await page.locator('[data-figure=Yield]').textContent()).toBe(`${((100 * passed) / 70).toFixed(1)} %`);
		// Pareto: good first (63 parts), then capacitance (7).
		expect(await page.locator('[data-pareto] [data-bar]').evaluateAll((bars) => bars.map((b) => b.getAttribute('data-bar')))).toEqual(['1', '2']);
		expect(await page.locator('[data-cv-overlay] [data-curve]').count()).toBeGreaterThanOrEqual(40);
		expect(await page.locator('[data-cv-overlay] [data-window]').count()).toBe(2);
		// Cpk of C at 1 V, by hand: σ = MR̄/d2 (d2 = 1.128 for n = 2, control-chart-constants.json), Cpk = min(USL − x̄, x̄ − LSL)/3σ.
		const c1 = posted.map((p) => (p.capacitanceF[0] ?? 0) * 1e12);
		const mean = c1.reduce((a, b) => a + b, 0) / c1.length;
		const mr = c1.slice(1).reduce((a, v, i) => a + Math.abs(v - (c1[i] ?? 0)), 0) / (c1.length - 1);
		const table = JSON.parse(await fs.readFile(path.join(import.meta.dirname, '../reference/spc/control-chart-constants.json'), 'utf8')) as { table: { n: number; d2: number }[] };
		const d2 = table.table.find((r) => r.n === 2)?.d2 ?? NaN;
		const sigma = mr / d2;
		const expected = Math.min((LOT_PLAN.points[0]?.maxF ?? 0) * 1e12 - mean, mean - (LOT_PLAN.points[0]?.minF ?? 0) * 1e12) / (3 * sigma);
		const shown = Number(await page.locator('[data-characteristic="C@1V"] [data-cpk]').getAttribute('data-cpk'));
		// The table gives d2 to 4 digits; the product's constant is more precise.
		expect(Math.abs(shown - expected) / Math.abs(expected)).toBeLessThan(1e-3);
		await page.screenshot({ path: path.join(screenshotDir(), 'lot-engineer-1920.png'), fullPage: true });
		await page.click('a:has-text("Log–log")');
		await page.waitForURL(/cv=log/);
		expect(await page.locator('[data-cv-overlay]').getAttribute('data-scale')).toBe('log');
		await page.setViewportSize(SIZES[0]);
		await page.screenshot({ path: path.join(screenshotDir(), 'lot-engineer-1366.png') });
		await page.context().close();
	});

	test('the parts table sorts, filters and pages by URL and keyboard; Back returns the previous page', async () => {
		const page = await signedInPage(browser, 'engineer');
		await page.goto(`${lotUrl()}#parts`);
		await page.waitForLoadState('networkidle');
		const newest = await firstSerial(page);
		expect(newest).toBe(posted[posted.length - 1]?.serial);
		// Keyboard: focus the Serial header link and press Enter; the focus stays on it.
		await page.focus('[data-sort-link=serial]');
		await page.keyboard.press('Enter');
		await page.waitForURL(/sort=serial/);
		await expect.poll(() => serials(page), { timeout: 10_000 }).toEqual(posted.map((p) => p.serial).sort().slice(0, 50));
		expect(await page.evaluate(() => document.activeElement?.getAttribute('data-sort-link'))).toBe('serial');
		expect(await page.locator('th[aria-sort=ascending] [data-sort-link=serial]').count()).toBe(1);
		await page.keyboard.press('Enter');
		await page.waitForURL(/dir=desc/);
		await expect.poll(() => firstSerial(page), { timeout: 10_000 }).toBe(posted.map((p) => p.serial).sort().reverse()[0]);
		// Next page by keyboard, then Back.
		const firstPage = await serials(page);
		await page.focus('[data-page=next]');
		await page.keyboard.press('Enter');
		await page.waitForURL(/after=/);
		await expect.poll(() => serials(page).then((s) => s.length), { timeout: 10_000 }).toBe(20);
		const secondPage = await serials(page);
		expect(secondPage.some((s) => firstPage.includes(s))).toBe(false);
		await page.goBack();
		await page.waitForURL((u) => !u.search.includes('after='));
		await expect.poll(() => serials(page), { timeout: 10_000 }).toEqual(firstPage);
		// Filter failing parts with the form; the URL carries the filter, and a reload keeps it.
		await page.selectOption('#pf-result', 'fail');
		await page.click('button:has-text("Apply")');
		await page.waitForURL(/result=fail/);
		const failing = posted.filter((p) => !p.pass).map((p) => p.serial);
		await expect.poll(async () => (await serials(page)).sort(), { timeout: 10_000 }).toEqual([...failing].sort());
		await page.reload();
		expect((await serials(page)).sort()).toEqual([...failing].sort());
		expect(await page.locator('[data-parts-total]').getAttribute('data-parts-total')).toBe(String(failing.length));
		// Every serial links to its part page.
		const href = await page.locator('[data-parts-table] tbody tr a').first().getAttribute('href');
		expect(href).toMatch(/^\/parts\/\d+$/);
		// A query the table cannot show is a 400 with the reason.
		const bad = await page.goto(`${lotUrl()}?sort=price`);
		expect(bad?.status()).toBe(400);
		await page.context().close();
	});

	test('an engineer holds the lot with a reason, releases it, downloads the certificate and e-mails it to a customer', async () => {
		const page = await signedInPage(browser, 'engineer');
		await page.goto(lotUrl());
		await page.waitForLoadState('networkidle');
		expect(await page.locator('[data-quality-note]').textContent()).toContain('quality system');
		expect(await page.locator('[data-certificate-link]').count()).toBe(0);
		// A reason is required: an empty one is refused beside the field and changes nothing.
		await page.click('button:has-text("Hold lot")');
		await expect.poll(() => page.locator('#d-reason-err').textContent(), { timeout: 10_000 }).toContain('reason');
		expect(await page.locator('[data-disposition]').getAttribute('data-disposition')).toBe('pending');
		await page.fill('#d-reason', 'C at 4 V near its upper limit on two stations');
		await page.click('button:has-text("Hold lot")');
		await expect.poll(() => page.locator('[data-disposition]').getAttribute('data-disposition'), { timeout: 10_000 }).toBe('held');
		expect(await page.locator('[data-disposition-reason]').textContent()).toBe('C at 4 V near its upper limit on two stations');
		await page.fill('#d-reason', 'Correlation study shows the stations agree');
		await page.click('button:has-text("Release lot")');
		await expect.poll(() => page.locator('[data-disposition]').getAttribute('data-disposition'), { timeout: 10_000 }).toBe('released');
		const history = (await page.locator('[aria-labelledby=lot-audit-h]').textContent()) ?? '';
		expect(history).toContain('hold');
		expect(history).toContain('release');

		const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-certificate-link]')]);
		const file = await download.path();
		const text = (await pdfPages(new Uint8Array(await fs.readFile(file)))).join(' ');
		const yieldPct = (100 * posted.filter((p) => p.pass).length) / posted.length;
		expect(text).toContain(line.lotNumber);
		expect(text).toContain(`${yieldPct.toFixed(2)} %`);
		expect(text).toContain('release of this lot is a decision of the site’s quality system');

		const to = `buyer-${randomUUID().slice(0, 8)}@customer.example`;
		await page.fill('input[name=to]', to);
		await page.fill('input[name=contact]', 'Incoming inspection');
		await page.click('button:has-text("E-mail certificate")');
		await expect.poll(() => page.locator('[role=status]').allTextContents(), { timeout: 15_000 }).toContain(`The certificate is on its way to ${to}.`);
		await expect.poll(() => messageTo(to), { timeout: 30_000, interval: 500 }).not.toBeNull();
		const pdf = pdfAttachment((await messageTo(to)) ?? '');
		expect(pdf?.filename).toBe(`${line.lotNumber}-certificate.pdf`);
		const attached = (await pdfPages(new Uint8Array(pdf?.bytes ?? Buffer.alloc(0)))).join(' ');
		expect(attached).toContain(line.lotNumber);
		expect(attached).toContain(`${yieldPct.toFixed(2)} %`);
		await page.screenshot({ path: path.join(screenshotDir(), 'lot-released-1366.png'), fullPage: true });
		await page.context().close();
	});

	test('an operator reads the lot but gets no hold, certificate or import controls', async () => {
		const page = await signedInPage(browser, 'operator');
		await page.goto(lotUrl());
		expect(await page.locator('[data-disposition]').getAttribute('data-disposition')).toBe('released');
		expect(await page.locator('button:has-text("Hold lot")').count()).toBe(0);
		expect(await page.locator('#certificate-h').count()).toBe(0);
		expect(await page.locator('a:has-text("Import bench file")').count()).toBe(0);
		expect(await page.locator('form[aria-label="Build matched sets"]').count()).toBe(0);
		await page.screenshot({ path: path.join(screenshotDir(), 'lot-operator-1366.png'), fullPage: true });
		await page.context().close();
	});
});
