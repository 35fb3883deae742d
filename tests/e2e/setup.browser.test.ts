// The set-up screens in Chromium: products and spec plans, stations and their tokens, lots.
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce as cookie, launch, screenshotDir, signedInPage, SIZES, type Who } from './helpers';

let browser: Browser;
beforeAll(async () => {
	browser = await launch();
});
afterAll(async () => {
	await browser?.close();
});

// Unique per run, so the tests can run again against the same database.
const RUN = Date.now().toString(36).slice(-5).toUpperCase();
const CODE = `TV-${RUN}`;
const STATION = `T-${RUN}`;
const LOT = `LT-T-${RUN}`;
/** The token of the station the admin adds; the lot test posts parts with it. */
let stationToken = '';

async function stationApi(token: string, pathname: string, body?: unknown, headers: Record<string, string> = {}) {
	return fetch(`${baseUrl()}/api/v1/${pathname}`, {
		method: body === undefined ? 'GET' : 'POST',
		headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json', ...headers },
		body: body === undefined ? undefined : JSON.stringify(body)
	});
}

// The fixture the test station is given: 100 µH, 3.1 pF stray, 100 nF blocking capacitor.
const L_H = 100e-6;
const STRAY_F = 3.1e-12;
const BLOCK_F = 100e-9;
/** Resonance of the tank with capacitance c in the socket (in series with the blocking capacitor). */
const resonanceHz = (c: number) => 1 / (2 * Math.PI * Math.sqrt(L_H * ((c * BLOCK_F) / (c + BLOCK_F) + STRAY_F)));

async function signedIn(who: Who, viewport: { width: number; height: number } = SIZES[0]): Promise<Page> {
	const page = await signedInPage(browser, who, viewport);
	await page.goto(`${baseUrl()}/floor`, { waitUntil: 'networkidle' });
	expect(new URL(page.url()).pathname).toBe('/floor');
	return page;
}

async function shot(page: Page, name: string, top = true) {
	if (top) await page.evaluate(() => window.scrollTo(0, 0));
	await page.screenshot({ path: path.join(screenshotDir(), `${name}.png`) });
}

/** The plan version the product's page shows as in force. */
const versionShown = (page: Page) => page.locator('[data-testid=plan-version]').textContent();

async function planSpcByApi(code: string): Promise<{ rules?: string[] } | undefined> {
	const res = await fetch(`${baseUrl()}/api/v1/products`, { headers: { cookie: await cookie('engineer') } });
	const body = (await res.json()) as { products: { code: string; plan: { plan: { spc?: { rules?: string[] } } } }[] };
	return body.products.find((x) => x.code === code)?.plan.plan.spc;
}

async function planVersionByApi(code: string): Promise<number> {
	const res = await fetch(`${baseUrl()}/api/v1/products`, { headers: { cookie: await cookie('engineer') } });
	const body = (await res.json()) as { products: { code: string; plan: { version: number } }[] };
	const p = body.products.find((x) => x.code === code);
	if (!p) throw new Error(`no product ${code}`);
	return p.plan.version;
}

// The 8 points of the new product: bias (V), min and max (pF); '' = measured, not judged.
const POINTS: [string, string, string][] = [
	['0.5', '30', '36'],
	['1', '25', '29'],
	['2', '', ''],
	['4', '15', '17.5'],
	['6', '', ''],
	['8', '10.5', '12.5'],
	['15', '', ''],
	['25', '6.5', '7.8']
];

describe('products and spec plans in Chromium', () => {
	test('an engineer creates a product with an 8-point plan and sees version 1', async () => {
		const page = await signedIn('engineer');
		await page.goto(`${baseUrl()}/products`, { waitUntil: 'networkidle' });
		await page.click('a:has-text("New product")');
		await page.waitForURL(/\/products\/new$/);
		expect(await page.locator('tr[data-row]').count()).toBe(8);
		await page.fill('#f-code', CODE);
		await page.fill('#f-name', 'Test varactor, 27 pF at 1 V');
		await page.selectOption('#f-family', 'abrupt');
		// Quick entry fills the bias column; the limits are then typed row by row with Tab.
		await page.fill('#bias-list', POINTS.map((p) => p[0]).join(' '));
		await page.press('#bias-list', 'Enter');
		expect(await page.inputValue('#f-points-7-biasV')).toBe('25');
		await page.click('#f-points-0-minPF');
		for (const [, min, max] of POINTS) {
			await page.keyboard.type(min);
			await page.keyboard.press('Tab');
			await page.keyboard.type(max);
			await page.keyboard.press('Tab'); // Remove is skipped: the next stop is the next row's bias
			await page.keyboard.press('Tab');
		}
		await page.fill('#f-ratio-lowBiasV', '1');
		await page.fill('#f-ratio-highBiasV', '25');
		await page.fill('#f-ratio-min', '3.4');
		await page.fill('#f-ratio-max', '4.2');
		await page.fill('#f-q-biasV', '4');
		await page.fill('#f-q-min', '150');
		await page.fill('#f-leakage-biasV', '25');
		await page.fill('#f-leakage-maxNA', '10');
		await page.fill('#f-matching-setSize', '2');
		await page.fill('#f-matching-tolerancePct', '2');
		expect(await page.inputValue('#f-points-3-maxPF')).toBe('17.5');
		for (const v of SIZES) {
			await page.setViewportSize(v);
			await shot(page, `product-new-${v.width}`);
		}
		await page.click('button:has-text("Create product")');
		await page.waitForURL(new RegExp(`/products/${CODE}\\?saved=1$`));
		expect(await versionShown(page)).toBe('version 1');
		expect(await page.locator('dl').textContent()).toContain('25 – 29 pF');
		expect(await planVersionByApi(CODE)).toBe(1);
		await page.context().close();
	});

	test('changing a limit makes version 2 with the change listed; saving again unchanged makes none', async () => {
		const page = await signedIn('engineer');
		await page.goto(`${baseUrl()}/products/${CODE}`, { waitUntil: 'networkidle' });
		expect(await page.inputValue('#f-points-1-maxPF')).toBe('29');
		await page.fill('#f-points-1-maxPF', '29.5');
		await page.fill('#f-note', 'Upper limit at 1 V widened after customer review');
		await page.click('button:has-text("Save as new version")');
		await page.waitForURL(/\?saved=2$/);
		expect(await versionShown(page)).toBe('version 2');
		const change = page.locator('[data-version="2"] table tbody tr');
		expect(await change.count()).toBe(1);
		expect(await change.textContent()).toContain('C at 1 V');
		expect(await change.textContent()).toContain('25 – 29 pF');
		expect(await change.textContent()).toContain('25 – 29.5 pF');
		expect(await page.locator('[data-version="2"]').textContent()).toContain('customer review');
		// The rule boxes show the defaults, and saving kept them as no choice (rules on by default).
		expect(await page.isChecked('#rule-WE1')).toBe(true);
		expect(await page.isChecked('#rule-WE4')).toBe(true);
		expect(await page.isChecked('#rule-N3')).toBe(false);
		expect((await planSpcByApi(CODE))?.rules).toBeUndefined();
		await page.click('button:has-text("Save as new version")');
		await expect.poll(() => page.locator('[role=status]').first().textContent()).toContain('Nothing changed');
		expect(await planVersionByApi(CODE)).toBe(2);
		for (const v of SIZES) {
			await page.setViewportSize(v);
			await page.reload();
			await shot(page, `product-${v.width}`);
		}
		await page.context().close();
	});

	test('min above max in row 3 and a non-number are shown beside their cells and make no version', async () => {
		const page = await signedIn('engineer');
		await page.goto(`${baseUrl()}/products/${CODE}`, { waitUntil: 'networkidle' });
		await page.fill('#f-points-2-minPF', '20');
		await page.fill('#f-points-2-maxPF', '18');
		await page.fill('#f-points-4-minPF', '12,5x');
		await page.click('button:has-text("Save as new version")');
		await expect.poll(() => page.locator('#f-points-2-minPF-err').textContent()).toContain('Min must be below Max');
		expect(await page.locator('#f-points-4-minPF-err').textContent()).toContain('Enter a number');
		expect(await page.getAttribute('#f-points-2-minPF', 'aria-invalid')).toBe('true');
		expect(await page.inputValue('#f-points-4-minPF')).toBe('12,5x');
		expect(await page.locator('[role=alert]').first().textContent()).toContain('not saved');
		// The first invalid cell has the focus, so the engineer starts fixing right there.
		expect(await page.evaluate(() => document.activeElement?.id)).toBe('f-points-2-minPF');
		await shot(page, 'product-error-1366', false);
		expect(await planVersionByApi(CODE)).toBe(2);
		await page.reload();
		expect(await versionShown(page)).toBe('version 2');
		await page.context().close();
	});

	test('an operator cannot reach the product editor (403) nor post its form action', async () => {
		const operator = await cookie('operator');
		const get = await fetch(`${baseUrl()}/products/${CODE}`, { headers: { cookie: operator }, redirect: 'manual' });
		expect(get.status).toBe(403);
		const body = new URLSearchParams({ 'points.0.biasV': '1', 'points.0.minPF': '1', 'points.0.maxPF': '2', note: 'not allowed' });
		const post = await fetch(`${baseUrl()}/products/${CODE}?/save`, {
			method: 'POST',
			headers: { cookie: operator, origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded' },
			body,
			redirect: 'manual'
		});
		expect(post.status).toBe(403);
		const created = await fetch(`${baseUrl()}/products/new`, {
			method: 'POST',
			headers: { cookie: operator, origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ code: `X-${RUN}`, name: 'x', family: 'other', 'points.0.biasV': '1' }),
			redirect: 'manual'
		});
		expect(created.status).toBe(403);
		expect(await planVersionByApi(CODE)).toBe(2);
	});
});

describe('stations and lots in Chromium', () => {
	test('an admin adds a station and sees its token once', async () => {
		const page = await signedIn('admin', SIZES[1]);
		await page.goto(`${baseUrl()}/stations`, { waitUntil: 'networkidle' });
		await page.fill('#f-name', STATION);
		await page.fill('#f-line', 'Line A');
		await page.fill('#f-inductanceUH', '100');
		await page.fill('#f-strayPF', '3.1');
		await page.fill('#f-blockingNF', 'abc');
		await page.click('button:has-text("Add station")');
		await expect.poll(() => page.locator('#f-blockingNF ~ .field-error').textContent()).toContain('number');
		expect(await page.locator(`[data-station-row="${STATION}"]`).count()).toBe(0);
		await page.fill('#f-blockingNF', '100');
		await page.selectOption('#f-arrangement', 'parallel2');
		await page.click('button:has-text("Add station")');
		const token = page.locator('[data-testid=station-token]');
		await expect.poll(() => token.textContent()).toMatch(/^bst_/);
		expect(await page.locator('text=will not be shown again').count()).toBe(1);
		expect(await page.locator(`[data-station-row="${STATION}"]`).textContent()).toContain('none');
		await shot(page, 'stations-token-1920');
		stationToken = (await token.textContent()) ?? '';
		expect((await stationApi(stationToken, 'station')).status).toBe(200);
		await page.reload();
		expect(await token.count()).toBe(0);
		await page.click(`a:has-text("${STATION}")`);
		await page.waitForURL(new RegExp(`/stations/${STATION}$`));
		expect(await page.locator('h1').textContent()).toContain(STATION);
		expect(await page.locator('dl').textContent()).toContain('Two in parallel');
		await page.click('button:has-text("Issue a new token")');
		await expect.poll(() => token.textContent()).toMatch(/^bst_/);
		const rotated = (await token.textContent()) ?? '';
		expect(rotated).not.toBe(stationToken);
		expect((await stationApi(stationToken, 'station')).status).toBe(401);
		expect((await stationApi(rotated, 'station')).status).toBe(200);
		stationToken = rotated;
		await shot(page, 'station-token-1920');
		await page.click('summary:has-text("Change fixture or policy")');
		await page.fill('#f-strayPF', '3.3');
		await page.fill('#f-validityHours', '12');
		await page.click('button:has-text("Save fixture and policy")');
		await expect.poll(() => page.locator('dl').textContent()).toContain('3.30 pF');
		expect(await page.locator('dl').textContent()).toContain('12 h');
		await page.context().close();
	});

	test('an operator opens a lot, loads it onto a station and closes it', async () => {
		const page = await signedIn('operator');
		await page.goto(`${baseUrl()}/lots`, { waitUntil: 'networkidle' });
		await page.click('button:has-text("Open lot")');
		await expect.poll(() => page.locator('#f-number-err').textContent()).toContain('Enter a lot number');
		expect(await page.locator('#f-productCode ~ .field-error').textContent()).toContain('Choose a product');
		await page.fill('#f-number', LOT);
		await page.selectOption('#f-productCode', 'KV-1405');
		await page.fill('#f-quantity', '1200');
		await page.click('button:has-text("Open lot")');
		const row = page.locator(`tr[data-lot="${LOT}"]`);
		await expect.poll(() => row.count()).toBe(1);
		expect(await row.locator('[data-testid=lot-status]').textContent()).toBe('open');
		await page.goto(`${baseUrl()}/stations/${STATION}`, { waitUntil: 'networkidle' });
		await page.selectOption('#f-lot', LOT);
		await page.click('button:has-text("Load")');
		await expect.poll(() => page.locator('[data-testid=current-lot]').textContent()).toContain(LOT);
		// The station calibrates and posts five parts into the lot; the lot list then counts them.
		const refs = [10e-12, 47e-12, 100e-12].map((c) => ({ capacitanceF: c, resonanceHz: resonanceHz(c) }));
		expect((await stationApi(stationToken, 'calibrations', { references: refs })).status).toBe(201);
		// Two identical parts in parallel (the station's arrangement): the tank sees twice one part.
		const partF = (v: number) => 40e-12 / Math.sqrt(1 + v / 0.75) + 0.3e-12;
		const units = Array.from({ length: 5 }, (_, i) => ({
			serial: `${LOT}-${i}`,
			testedAt: new Date().toISOString(),
			leakageA: 1e-10,
			points: [1, 2, 4, 8, 15, 25].map((v) => ({ biasV: v, resonanceHz: resonanceHz(2 * partF(v)), bandwidthHz: resonanceHz(2 * partF(v)) / 300 }))
		}));
		expect((await stationApi(stationToken, 'results', { lot: LOT, units }, { 'idempotency-key': `setup-${RUN}` })).status).toBe(201);
		await page.goto(`${baseUrl()}/stations`, { waitUntil: 'networkidle' });
		expect(await page.locator(`[data-station-row="${STATION}"]`).textContent()).toContain('in force until');
		await page.goto(`${baseUrl()}/lots`, { waitUntil: 'networkidle' });
		expect(await row.locator('td').nth(6).textContent()).toBe('5');
		await row.locator('button:has-text("Close")').click();
		await expect.poll(() => row.locator('[data-testid=lot-status]').textContent()).toBe('closed');
		await page.click(`a:has-text("${LOT}")`);
		await page.waitForURL(new RegExp(`/lots/${LOT}$`));
		expect(await page.locator('[data-figure=Quantity]').textContent()).toBe('1,200');
		expect(await page.locator('[data-figure=Tested]').textContent()).toBe('5');
		expect(await page.locator('[data-parts-table] tbody tr').count()).toBe(5);
		expect(await page.locator('[data-parts-table] thead').textContent()).toContain('C at 25 V (pF)');
		await page.context().close();
	});
});

describe('revoking a station token', () => {
	test('an admin revokes the token after confirming; the station is refused from then on', async () => {
		const page = await signedIn('admin');
		await page.goto(`${baseUrl()}/stations/${STATION}`, { waitUntil: 'networkidle' });
		await page.click('button:has-text("Revoke token…")');
		await page.click('button:has-text("Yes, revoke")');
		await expect.poll(() => page.locator('[role=status]').first().textContent()).toContain('Token revoked');
		expect(await page.locator('text=No token: the station cannot post').count()).toBe(1);
		expect((await stationApi(stationToken, 'station')).status).toBe(401);
		await page.context().close();
	});
});

describe('set-up pages at shop-floor and laptop sizes', () => {
	const pages: { who: Who; url: string; name: string }[] = [
		{ who: 'engineer', url: '/products', name: 'products' },
		{ who: 'engineer', url: '/products/KV-2210H', name: 'product-demo' },
		{ who: 'admin', url: '/stations', name: 'stations-admin' },
		{ who: 'admin', url: '/stations/A-03', name: 'station-admin' },
		{ who: 'operator', url: '/stations/B-01', name: 'station-operator' },
		{ who: 'operator', url: '/lots', name: 'lots-operator' },
		{ who: 'operator', url: '/lots/LT-26-1187', name: 'lot' }
	];
	test('each page renders for its role at 1366×768 and 1920×1080', async () => {
		for (const v of SIZES) {
			const seen = new Map<Who, Page>();
			for (const p of pages) {
				const page = seen.get(p.who) ?? (await signedIn(p.who, v));
				seen.set(p.who, page);
				const res = await page.goto(`${baseUrl()}${p.url}`, { waitUntil: 'networkidle' });
				expect(res?.status(), p.url).toBe(200);
				await shot(page, `${p.name}-${v.width}`);
			}
			for (const page of seen.values()) await page.context().close();
		}
	});
});
