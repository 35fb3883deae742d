// Strings that come from stations and people are shown as text on every page, never run as markup.
// The free-text fields that can carry markup: a part's serial (stations), a product's name, a
// station's line, an alarm's cause and action (people). Lot numbers, station names and product codes
// are refused unless letters, digits and . _ - / (src/lib/schemas/setup.ts), so they cannot.
// Each page is loaded in Chromium: no dialog may open, no injected element or script may exist,
// and where the page shows the string it shows it literally.
import { randomUUID } from 'node:crypto';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce, launch, signedInPage, type Who } from './helpers';
import { jsonInit, TEST_FIXTURE } from './line';
import { abruptPartF, pF, referenceReadings, resonanceHz } from './physics';

// Attribute break-out, an element with a handler, a script element and an SVG handler; each
// sets a marker the test reads back, and alert() would open a dialog.
const XSS = `"><img src=x onerror="alert(1);window.__xss=1"><script>window.__xss=2</script>`;
const XSS_SVG = `'><svg onload=alert(2)><b id=xssb>`;

let browser: Browser;
const tag = randomUUID().slice(0, 6);
const code = `XSS-${tag}`;
const stationName = `XSS-S-${tag}`;
const lotNumber = `LT-XSS-${tag}`;
const productName = `Part ${XSS}`;
const lineName = `Line ${XSS_SVG}`;
const serialOf = (i: number) => `${String(i).padStart(3, '0')}${i % 2 ? XSS : XSS_SVG}`.slice(0, 80);
let alarmCause = '';

beforeAll(async () => {
	browser = await launch();
	const [admin, engineer, operator] = await Promise.all([cookieOnce('admin'), cookieOnce('engineer'), cookieOnce('operator')]);
	const plan = { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }], spc: { baselineParts: 10, rules: ['WE1'] } };
	expect((await fetch(`${baseUrl()}/api/v1/products`, jsonInit(engineer, 'POST', { code, name: productName, plan }))).status).toBe(201);
	const st = await fetch(`${baseUrl()}/api/v1/stations`, jsonInit(admin, 'POST', { name: stationName, line: lineName, fixture: TEST_FIXTURE }));
	expect(st.status).toBe(201);
	const token = ((await st.json()) as { token: string }).token;
	expect((await fetch(`${baseUrl()}/api/v1/lots`, jsonInit(operator, 'POST', { number: lotNumber, productCode: code, quantity: 100 }))).status).toBe(201);
	const station = (body: unknown, path: string, key?: string) =>
		fetch(`${baseUrl()}${path}`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, ...(key ? { 'idempotency-key': key } : {}) },
			body: JSON.stringify(body)
		});
	expect((await station({ references: referenceReadings(TEST_FIXTURE) }, '/api/v1/calibrations')).status).toBe(201);
	// Ten steady parts freeze the chart limits; the eleventh, far out, opens a WE1 alarm.
	const part = (i: number, relative: number) => ({
		serial: serialOf(i),
		testedAt: new Date().toISOString(),
		points: [1, 4].map((v) => ({ biasV: v, resonanceHz: resonanceHz(TEST_FIXTURE, abruptPartF(v) * (1 + relative)) }))
	});
	const parts = Array.from({ length: 10 }, (_, i) => part(i + 1, 0.002 * Math.sin(i + 1)));
	expect((await station({ lot: lotNumber, units: parts }, '/api/v1/results', randomUUID())).status).toBe(201);
	expect((await station({ lot: lotNumber, units: [part(11, 0.2)] }, '/api/v1/results', randomUUID())).status).toBe(201);
	const alarms = (await (await fetch(`${baseUrl()}/api/v1/alarms?status=open`, { headers: { cookie: engineer } })).json()) as {
		alarms: { id: number; station: string }[];
	};
	const alarm = alarms.alarms.find((a) => a.station === stationName);
	expect(alarm).toBeDefined();
	alarmCause = `Cause ${XSS}`;
	const closed = await fetch(`${baseUrl()}/api/v1/alarms/${alarm?.id}`, jsonInit(engineer, 'PATCH', { status: 'closed', cause: alarmCause, action: `Action ${XSS_SVG}` }));
	expect(closed.status).toBe(200);
});
afterAll(async () => {
	await browser?.close();
});

/** Loads the page as `who`; fails on a dialog, a marker set by injected script, or an injected element. */
async function loadClean(who: Who, path: string): Promise<{ page: Page; text: string }> {
	const page = await signedInPage(browser, who, { width: 1920, height: 1080 });
	const dialogs: string[] = [];
	page.on('dialog', (d) => {
		dialogs.push(d.message());
		void d.dismiss();
	});
	const res = await page.goto(`${baseUrl()}${path}`, { waitUntil: 'networkidle' });
	expect(res?.status(), path).toBe(200);
	// Give client-side rendering (charts, live tiles) a moment to run anything it would run.
	await page.waitForTimeout(300);
	const found = await page.evaluate(() => ({
		marker: (window as unknown as { __xss?: number }).__xss ?? null,
		imgs: document.querySelectorAll('img[src="x"], img[onerror]').length,
		svgs: document.querySelectorAll('svg[onload]').length,
		bold: document.querySelectorAll('#xssb').length,
		scripts: [...document.querySelectorAll('script')].filter((s) => s.textContent?.includes('window.__xss=2') && !s.textContent.includes('\\u003C')).length
	}));
	expect({ path, dialogs, ...found }).toEqual({ path, dialogs: [], marker: null, imgs: 0, svgs: 0, bold: 0, scripts: 0 });
	return { page, text: await page.locator('body').innerText() };
}

describe('strings from stations and people are shown escaped', () => {
	test('floor, lots, lot page, part page, station page, alarms, charts and products', async () => {
		const cases: { who: Who; path: string; shows?: string[] }[] = [
			{ who: 'operator', path: '/floor' },
			{ who: 'operator', path: '/lots' },
			{ who: 'engineer', path: `/lots/${lotNumber}`, shows: [serialOf(11)] },
			{ who: 'admin', path: `/stations/${stationName}`, shows: [lineName] },
			{ who: 'engineer', path: '/alarms?status=all', shows: [alarmCause] },
			{ who: 'engineer', path: '/charts' },
			{ who: 'engineer', path: '/products' },
			{ who: 'engineer', path: `/products/${code}`, shows: [productName] }
		];
		for (const c of cases) {
			const { page, text } = await loadClean(c.who, c.path);
			for (const s of c.shows ?? []) expect(text, `${c.path} shows ${s} as text`).toContain(s);
			if (c.path === `/lots/${lotNumber}`) {
				// The part page of one hostile serial, through the lot page's own link.
				const href = await page.locator('a[href^="/parts/"]').first().getAttribute('href');
				expect(href).toMatch(/^\/parts\/\d+/);
				const part = await loadClean('engineer', href ?? '/');
				expect(part.text.includes(serialOf(11)) || part.text.includes(serialOf(10))).toBe(true);
				await part.page.context().close();
			}
			await page.context().close();
		}
	});
});
