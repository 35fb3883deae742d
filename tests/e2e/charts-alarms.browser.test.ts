import { randomUUID } from 'node:crypto';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieOnce as cookie, launch, screenshotDir, signedInPage, SIZES, type Who } from './helpers';
import { abruptPartF, pF, resonanceHz, type TestFixture } from './physics';
import { addCalibratedStation } from './line';

// The Charts and Alarms screens in Chromium. Data as in spc.test.ts: a product whose first 10
// parts freeze the limits, checking WE1 (one point beyond 3 sigma, Western Electric 1956 rule 1)
// and WE4; one part 6 sigma high then opens a WE1 alarm on the C@1V and C@4V charts.

const FIXTURE: TestFixture = { inductanceH: 100e-6, strayF: 3.0 * pF, blockingF: 100e-9, arrangement: 'single' };
const BIASES = [1, 4];
const tag = randomUUID().slice(0, 8);
const code = `CAU-${tag}`;
const lotNumber = `LT-CA-${tag}`;
const stationName = `CA-${tag}`;
// Relative deviations of the 10 baseline parts; sigma of individuals = MR̄/1.128 (d2 for n = 2).
const BASELINE = [0.002, -0.002, 0.001, -0.002, 0.002, -0.001, 0.002, -0.002, 0.001, -0.001];
const mrBar = BASELINE.slice(1).reduce((a, b, i) => a + Math.abs(b - (BASELINE[i] ?? 0)), 0) / (BASELINE.length - 1);
const sigmaRel = mrBar / 1.128;

let browser: Browser;
let token = '';
let serialNo = 0;
let chartId = 0;
let alarmId = 0;

const json = (cookie: string, method: string, body: unknown) => ({ method, headers: { cookie, 'content-type': 'application/json' }, body: JSON.stringify(body) });

function unit(relative: number) {
	serialNo++;
	return {
		serial: `${lotNumber}-${String(serialNo).padStart(4, '0')}`,
		testedAt: new Date().toISOString(),
		points: BIASES.map((v) => ({ biasV: v, resonanceHz: resonanceHz(FIXTURE, abruptPartF(v) * (1 + relative)) }))
	};
}

async function postUnits(units: ReturnType<typeof unit>[]) {
	const res = await fetch(`${baseUrl()}/api/v1/results`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': randomUUID() },
		body: JSON.stringify({ lot: lotNumber, units })
	});
	expect(res.status).toBe(201);
}

/** A station of its own with a calibration; returns its token. */
const newStation = (name: string): Promise<string> => addCalibratedStation(name, { fixture: FIXTURE });

const signedIn = (who: Who, viewport: { width: number; height: number } = SIZES[0]): Promise<Page> => signedInPage(browser, who, viewport);

async function shot(page: Page, name: string) {
	await page.evaluate(() => window.scrollTo(0, 0));
	await page.screenshot({ path: path.join(screenshotDir(), `${name}.png`), fullPage: true });
}

beforeAll(async () => {
	browser = await launch();
	const [, engineer, operator] = await Promise.all([cookie('admin'), cookie('engineer'), cookie('operator')]);
	const plan = {
		points: [
			{ biasV: 1, minF: 20 * pF, maxF: 35 * pF },
			{ biasV: 4, minF: 12 * pF, maxF: 22 * pF }
		],
		spc: { baselineParts: 10, rules: ['WE1', 'WE4'] }
	};
	expect((await fetch(`${baseUrl()}/api/v1/products`, json(engineer, 'POST', { code, name: 'Charts screen test part', plan }))).status).toBe(201);
	token = await newStation(stationName);
	expect((await fetch(`${baseUrl()}/api/v1/lots`, json(operator, 'POST', { number: lotNumber, productCode: code, quantity: 100 }))).status).toBe(201);
	await postUnits(BASELINE.map(unit));
	await postUnits([unit(6 * sigmaRel), unit(0.001), unit(-0.001), unit(0.0015)]);
	const charts = await fetch(`${baseUrl()}/api/v1/charts?station=${stationName}`, { headers: { cookie: engineer } });
	const list = ((await charts.json()) as { charts: { id: number; characteristic: string; kind: string }[] }).charts;
	chartId = list.find((c) => c.characteristic === 'C@1V' && c.kind === 'production')?.id ?? 0;
	const alarms = await fetch(`${baseUrl()}/api/v1/alarms?station=${stationName}`, { headers: { cookie: engineer } });
	const open = ((await alarms.json()) as { alarms: { id: number; rule: string; chart: { id: number } }[] }).alarms;
	alarmId = open.find((a) => a.rule === 'WE1' && a.chart.id === chartId)?.id ?? 0;
	expect(chartId).toBeGreaterThan(0);
	expect(alarmId).toBeGreaterThan(0);
});

afterAll(async () => {
	await browser?.close();
});

describe('charts and alarms screens in Chromium', () => {
	test('an engineer opens the chart of a station and sees CL, UCL, LCL and the marked WE1 violation', async () => {
		for (const viewport of SIZES) {
			const page = await signedIn('engineer', viewport);
			await page.goto(`${baseUrl()}/charts?product=${code}&station=${stationName}&kind=production`, { waitUntil: 'networkidle' });
			const chart = page.locator('[data-panel=individuals]');
			// Layer Cake draws once the browser has measured the chart.
			await expect.poll(() => chart.locator('[data-violation]').count()).toBe(1);
			for (const line of ['CL', 'UCL', 'LCL', 'LSL', 'USL']) expect(await chart.locator(`[data-line-label="${line}"]`).count()).toBe(1);
			for (const line of ['CL', 'UCL', 'LCL']) expect(await chart.locator(`line[data-line="${line}"]`).count()).toBe(1);
			const marks = chart.locator('[data-violation]');
			expect(await marks.count()).toBe(1);
			expect(await marks.getAttribute('data-violation')).toContain('WE1');
			expect(await marks.getAttribute('data-x')).toBe('10');
			expect(await page.locator('#pick-chart option:checked').textContent()).toContain('C@1V');
			expect(await page.locator('[data-panel=moving-range]').count()).toBe(1);
			expect(await page.locator('[data-index=Cpk] dd').first().textContent()).toMatch(/\d/);
			expect(await page.locator('[data-warning=NOT_IN_CONTROL]').count()).toBe(1);
			expect(await page.locator('[data-limits-version="1"]').count()).toBe(1);
			await shot(page, `charts-imr-${viewport.width}`);
			await page.context().close();
		}
	});

	test('switching the view to EWMA through the picker fetches it and changes the URL', async () => {
		const page = await signedIn('engineer', SIZES[1]);
		// networkidle: the page is hydrated, so the picker runs in the browser.
		await page.goto(`${baseUrl()}/charts?chart=${chartId}`, { waitUntil: 'networkidle' });
		await page.click('button[data-view=ewma]');
		await expect.poll(() => new URL(page.url()).searchParams.get('view')).toBe('ewma');
		expect(new URL(page.url()).searchParams.get('chart')).toBe(String(chartId));
		expect(new URL(page.url()).searchParams.get('station')).toBe(stationName);
		await expect.poll(() => page.locator('[data-panel=ewma]').count()).toBe(1);
		expect(await page.locator('[data-panel=individuals]').count()).toBe(0);
		expect(await page.locator('[data-panel=ewma] path[data-line=UCL]').count()).toBe(1);
		await shot(page, 'charts-ewma-1920');
		// The recompute form refuses a change without a reason, beside the field.
		await page.click('button:has-text("Freeze new limits")');
		await expect.poll(() => page.locator('#rl-reason-err').textContent()).toContain('Say why');
		await page.context().close();
	});

	test('an operator acknowledges an alarm, has no close form, and a posted close is refused with 403', async () => {
		for (const viewport of SIZES) {
			const page = await signedIn('operator', viewport);
			await page.goto(`${baseUrl()}/alarms?station=${stationName}`);
			const row = page.locator(`tr[data-alarm="${alarmId}"]`);
			if (viewport === SIZES[0]) {
				expect(await row.getAttribute('data-status')).toBe('open');
				expect(await row.locator('[data-suspect]').textContent()).toMatch(/Tester|Product|Lot|undecided/);
				expect(await row.locator(`a[href="/charts?chart=${chartId}"]`).count()).toBe(1);
				await shot(page, `alarms-operator-open-${viewport.width}`);
				await row.locator('button:has-text("Acknowledge")').click();
				await expect.poll(() => row.getAttribute('data-status')).toBe('acknowledged');
				expect(await row.textContent()).toContain('Acknowledged by');
			}
			expect(await page.locator('[data-close-form]').count()).toBe(0);
			await shot(page, `alarms-operator-${viewport.width}`);
			await page.context().close();
		}
		const res = await fetch(`${baseUrl()}/alarms?/close`, {
			method: 'POST',
			headers: { cookie: await cookie('operator'), origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ alarmId: String(alarmId), cause: 'Socket contamination', action: 'Cleaned the socket' }).toString()
		});
		expect(res.status).toBe(403);
		const after = await fetch(`${baseUrl()}/api/v1/alarms/${alarmId}`, { headers: { cookie: await cookie('engineer') } });
		expect(((await after.json()) as { alarm: { status: string } }).alarm.status).toBe('acknowledged');
	});

	test('an engineer closing without a cause sees the message beside the field, then closes with cause and action', async () => {
		const page = await signedIn('engineer', SIZES[1]);
		await page.goto(`${baseUrl()}/alarms?station=${stationName}&status=all`);
		const closeRow = page.locator(`tr[data-close-row="${alarmId}"]`);
		await closeRow.locator('summary').click();
		await closeRow.locator('button:has-text("Close alarm")').click();
		await expect.poll(() => page.locator(`#close-${alarmId}-cause-err`).textContent()).toContain('Say what caused it');
		expect(await page.locator(`#close-${alarmId}-action-err`).textContent()).toContain('Say what was done');
		expect(await page.locator(`tr[data-alarm="${alarmId}"]`).getAttribute('data-status')).toBe('acknowledged');
		await shot(page, 'alarms-close-error-1920');
		await page.fill(`#close-${alarmId}-cause`, 'Socket contamination');
		await page.fill(`#close-${alarmId}-action`, 'Cleaned the socket, re-ran the reference part');
		await closeRow.locator('button:has-text("Close alarm")').click();
		const row = page.locator(`tr[data-alarm="${alarmId}"]`);
		await expect.poll(() => row.getAttribute('data-status')).toBe('closed');
		expect(await row.locator('[data-cause]').textContent()).toBe('Socket contamination');
		expect(await row.locator('[data-action-taken]').textContent()).toContain('Cleaned the socket');
		expect(await page.locator(`tr[data-close-row="${alarmId}"]`).count()).toBe(0);
		await shot(page, 'alarms-engineer-1920');
		await page.context().close();
	});

	test('an engineer recomputes limits leaving out the violating point; the new version lists the exclusion', async () => {
		const page = await signedIn('engineer', SIZES[0]);
		await page.goto(`${baseUrl()}/charts?chart=${chartId}`, { waitUntil: 'networkidle' });
		await page.click('button:has-text("Leave out a point")');
		await page.fill('[name="exclusions.0.seq"]', '10');
		await page.click('button:has-text("Freeze new limits")');
		await expect.poll(() => page.locator('#rl-reason-err').textContent()).toContain('Say why');
		expect(await page.locator('.field-error').allTextContents()).toContain('Give a reason for excluding this point');
		await page.fill('[name="exclusions.0.reason"]', 'Shifted part, contaminated socket');
		await page.fill('#rl-reason', 'Leave out the shifted part');
		await page.click('button:has-text("Freeze new limits")');
		await expect.poll(() => page.locator('[data-limits-version="2"]').count()).toBe(1);
		expect(await page.locator('[data-limits-version="2"]').textContent()).toContain('#10 Shifted part, contaminated socket');
		expect(await page.locator('[data-limits-version="2"]').textContent()).toContain('in use');
		await shot(page, 'charts-recomputed-1366');
		await page.context().close();
	});

	test('before its baseline parts are in, a chart shows its points without limits', async () => {
		const early = `CB-${tag}`;
		token = await newStation(early);
		await postUnits([unit(0.001), unit(-0.001), unit(0.002)]);
		const page = await signedIn('engineer', SIZES[0]);
		await page.goto(`${baseUrl()}/charts?product=${code}&station=${early}`, { waitUntil: 'networkidle' });
		await expect.poll(() => page.locator('[data-panel=individuals] circle').count()).toBe(3);
		expect(await page.locator('[data-panel=individuals] line[data-line=UCL]').count()).toBe(0);
		expect(await page.locator('[role=status]').first().textContent()).toContain('No frozen limits yet');
		expect(await page.locator('text=collecting baseline').count()).toBe(1);
		await shot(page, 'charts-baseline-1366');
		await page.context().close();
	});
});
