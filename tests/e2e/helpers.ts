// Shared by the HTTP and browser tests: the server under test was started by src/ops/test.mjs.
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';

export function baseUrl(): string {
	const url = process.env.BIASLINE_E2E_URL;
	if (!url) throw new Error('BIASLINE_E2E_URL is not set: run the tests with npm test');
	return url;
}

/** A second app instance on the same database (started by src/ops/test.mjs). */
export function baseUrlB(): string {
	const url = process.env.BIASLINE_E2E_URL_B;
	if (!url) throw new Error('BIASLINE_E2E_URL_B is not set: run the tests with npm test');
	return url;
}

export const PEOPLE = {
	admin: { email: process.env.BIASLINE_E2E_ADMIN_EMAIL ?? 'admin@corvane.example', password: process.env.BIASLINE_E2E_ADMIN_PASSWORD ?? 'biasline-admin' },
	engineer: { email: 'noor.haddad@corvane.example', password: 'biasline-demo' },
	operator: { email: 'tomas.brandt@corvane.example', password: 'biasline-demo' }
} as const;

export type Who = keyof typeof PEOPLE;

/** Signs in through the API and returns the Cookie header value. */
export async function cookieFor(who: Who): Promise<string> {
	const res = await fetch(`${baseUrl()}/api/v1/session`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify(PEOPLE[who])
	});
	if (res.status !== 200) throw new Error(`sign-in as ${who} gave ${res.status}`);
	const set = res.headers.get('set-cookie') ?? '';
	return set.split(';')[0] ?? '';
}

export async function launch(): Promise<Browser> {
	return chromium.launch({
		executablePath: '/usr/bin/chromium',
		args: [
			'--headless',
			'--no-sandbox',
			'--disable-gpu',
			'--disable-quic',
			'--no-first-run',
			'--disable-background-networking',
			'--disable-component-update',
			'--disable-sync'
		]
	});
}

/** Where screenshots go (ignored by git); SCREENSHOT_DIR overrides. */
export function screenshotDir(): string {
	const dir = process.env.SCREENSHOT_DIR ?? path.join(process.env.BIASLINE_DATA_DIR ?? os.tmpdir(), 'screenshots');
	fs.mkdirSync(dir, { recursive: true });
	return dir;
}

export const SIZES = [
	{ width: 1366, height: 768 },
	{ width: 1920, height: 1080 }
] as const;

// Sign-ins are limited per client address and every test file shares one server, so each role
// signs in once per file and reuses its cookie.
const cookieCache = new Map<Who, Promise<string>>();
export function cookieOnce(who: Who): Promise<string> {
	let c = cookieCache.get(who);
	if (!c) {
		c = cookieFor(who);
		cookieCache.set(who, c);
	}
	return c;
}

/** A new browser context signed in as `who` (the session cookie set directly) and its page. */
export async function signedInPage(browser: Browser, who: Who, viewport: { width: number; height: number } = SIZES[0]): Promise<Page> {
	const context = await browser.newContext({ viewport });
	const [name = '', value = ''] = (await cookieOnce(who)).split(/=(.*)/s);
	await context.addCookies([{ name, value, url: baseUrl() }]);
	return context.newPage();
}
