// A study end to end in Chromium: the engineer creates it in the browser (10 parts taken from a
// lot, two stations, 2 trials), starts it, the stations measure what GET /api/v1/station names
// (test physics with a little per-trial noise), the grid fills, the analysis shows a verdict,
// the engineer finishes it and downloads the PDF, which pdf.js reads back. Then the audit page:
// filter by entity and actor (in the URL) and download the CSV.
import fs from 'node:fs';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { pdfPages } from '../support/pdf-text';
import { baseUrl, launch, screenshotDir, signedInPage, SIZES } from './helpers';
import { addStation, measureAll, setUpStudyLine, type StudyLine, type StudyStation } from './studies-support';

let browser: Browser;
let s: StudyLine;
let b: StudyStation;
let studyPath = '';

async function shot(page: Page, name: string) {
	await page.evaluate(() => window.scrollTo(0, 0));
	await page.screenshot({ path: path.join(screenshotDir(), `${name}.png`), fullPage: true });
}

beforeAll(async () => {
	browser = await launch();
	s = await setUpStudyLine('MSW', 10);
	b = await addStation(`MSWB-${s.line.tag}`, 0.003);
});

afterAll(async () => {
	await browser?.close();
});

describe('studies in Chromium', () => {
	test('the engineer creates and starts a study, the stations fill the grid, the verdict and the PDF follow', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[1]);
		await page.goto(`${baseUrl()}/studies`, { waitUntil: 'networkidle' });
		// Bad input first: no stations chosen, the error shows beside the field and nothing is stored.
		await page.fill('#f-name', `Browser study ${s.line.tag}`);
		await page.selectOption('#f-productCode', s.line.code);
		await page.selectOption('#f-lot', s.line.lotNumber);
		await page.click('button:has-text("Take 10 parts")');
		await expect.poll(async () => (await page.inputValue('#f-serials')).split('\n').filter(Boolean).length).toBe(10);
		expect(new Set((await page.inputValue('#f-serials')).split('\n'))).toEqual(new Set(s.serials));
		await page.click('button:has-text("Create study")');
		await expect.poll(() => page.locator('.field-error').allTextContents()).toContain('Choose 2 to 10 stations');
		await page.check(`input[name=stations][value="${s.first.name}"]`);
		await page.check(`input[name=stations][value="${b.name}"]`);
		await page.selectOption('#f-trials', '2');
		await page.click('button:has-text("Create study")');
		await page.waitForURL(/\/studies\/\d+$/);
		studyPath = new URL(page.url()).pathname;
		expect(await page.locator('[data-testid=study-status]').textContent()).toBe('draft');
		expect(await page.locator('[data-cell=empty]').count()).toBe(40);
		await page.click('button:has-text("Start study")');
		await expect.poll(() => page.locator('[data-testid=study-status]').textContent()).toBe('running');

		// Halfway: the grid shows what is measured when the page is read again.
		expect(await measureAll(s, [s.first, b], 11)).toBe(40);
		await expect.poll(() => page.locator('[data-testid=progress]').textContent(), { timeout: 15_000 }).toBe('40 of 40');
		expect(await page.locator('[data-cell=filled]').count()).toBe(40);
		const verdict = page.locator('[data-testid=study-verdict]');
		await expect.poll(() => verdict.count()).toBe(1);
		const shown = (await verdict.textContent())?.trim() ?? '';
		expect(['Good', 'Conditional', 'Not acceptable', 'Indeterminate']).toContain(shown);
		// Every characteristic has its tables and plots; the plots are drawn by Layer Cake.
		expect(await page.locator('[data-characteristic]').count()).toBe(4);
		const c1 = page.locator('[data-characteristic="C@1V"]');
		expect(await c1.locator('[data-table=anova] tbody tr').count()).toBe(5);
		expect(await c1.locator('[data-testid=ndc]').textContent()).toMatch(/ndc = \d+/);
		await expect.poll(() => c1.locator('[data-plot=by-part] [data-dot]').count()).toBe(40);
		expect(await c1.locator('[data-plot=components] [data-bar]').count()).toBe(12);
		expect(await c1.locator('[data-plot=interaction] path').count()).toBeGreaterThanOrEqual(2);
		expect(await c1.locator('[data-testid=range-check]').count()).toBe(1);
		// The stations are listed by name on the form, so B comes first: B − first ≈ +0.3 %, the
		// bias the test injects (4th column, bias %).
		const biasPct = Number((await c1.locator(`[data-bias="${b.name}-${s.first.name}"] td`).nth(3).textContent())?.replace('%', '').trim());
		expect(Math.abs(biasPct - 0.3)).toBeLessThan(0.05);
		await shot(page, 'study-analysis-1920');
		await c1.scrollIntoViewIfNeeded();
		await page.screenshot({ path: path.join(screenshotDir(), 'study-characteristic-1920.png') });

		await page.click('button:has-text("Finish study")');
		await expect.poll(() => page.locator('[data-testid=study-status]').textContent()).toBe('finished');
		const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=report]')]);
		const file = await download.path();
		const text = (await pdfPages(new Uint8Array(fs.readFileSync(file)))).join(' ');
		expect(text).toContain(`Verdict: ${shown}`);
		expect(text).toContain(`Browser study ${s.line.tag}`);
		await page.context().close();
	});

	test('the study page reads well at 1366 wide', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[0]);
		await page.goto(`${baseUrl()}${studyPath}`, { waitUntil: 'networkidle' });
		await expect.poll(() => page.locator('[data-plot=by-station] [data-dot]').first().count()).toBe(1);
		const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
		expect(overflow).toBeLessThanOrEqual(0);
		await shot(page, 'study-analysis-1366');
		await page.goto(`${baseUrl()}/studies`, { waitUntil: 'networkidle' });
		await shot(page, 'studies-1366');
		await page.context().close();
	});

	test('the audit page filters by entity and actor in the URL and downloads the same selection as CSV', async () => {
		const page = await signedInPage(browser, 'engineer', SIZES[0]);
		await page.goto(`${baseUrl()}/audit`, { waitUntil: 'networkidle' });
		await page.selectOption('#a-entity', 'study');
		await page.fill('#a-actor', 'noor.haddad');
		await page.click('button:has-text("Filter")');
		await page.waitForURL(/entity=study/);
		const url = new URL(page.url());
		expect(url.searchParams.get('entity')).toBe('study');
		expect(url.searchParams.get('actor')).toBe('noor.haddad');
		const rows = page.locator('tr[data-audit]');
		expect(await rows.count()).toBeGreaterThanOrEqual(3);
		expect(new Set(await rows.evaluateAll((els) => els.map((e) => e.getAttribute('data-entity'))))).toEqual(new Set(['study']));
		const studyId = studyPath.split('/').pop() ?? '';
		expect(await page.locator('tr[data-audit]', { hasText: `study ${studyId}` }).count()).toBe(3);
		// Nothing on the page edits or deletes an entry.
		expect(await page.locator('main form[method=POST], main button:has-text("Delete"), main button:has-text("Edit")').count()).toBe(0);
		await shot(page, 'audit-1366');
		const [download] = await Promise.all([page.waitForEvent('download'), page.click('[data-testid=audit-csv]')]);
		const csv = fs.readFileSync(await download.path(), 'utf8').trim().split('\r\n');
		expect(csv[0]).toBe('id,at,actor,entity,entityId,action,before,after');
		expect(csv.length - 1).toBe(Number((await page.locator('[data-testid=audit-count]').textContent())?.match(/of (\d+)/)?.[1] ?? 0));
		expect(csv.slice(1).every((l) => l.includes(',study,') && l.includes('noor.haddad'))).toBe(true);
		await page.context().close();
	});
});
