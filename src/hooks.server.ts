import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { building } from '$app/environment';
import { randomUUID } from 'node:crypto';
import { SESSION_COOKIE, userFromToken } from '$lib/server/auth';
import { problem } from '$lib/server/problem';
import { stationFromToken } from '$lib/server/stations';
import { startMailSender } from '$lib/server/mail/sender';
import { prepareDatabase } from '$lib/server/setup';
import { DATABASE_RETRY_AFTER_S, isDatabaseUnavailable } from '$lib/server/db/unavailable';

export const init: ServerInit = async () => {
	if (building) return;
	await prepareDatabase();
	startMailSender();
};

const unavailableDetail = 'The database is unavailable at the moment; nothing was stored. Try again shortly.';
const unavailableProblem = () =>
	problem(503, unavailableDetail, { kind: 'database-unavailable', headers: { 'retry-after': String(DATABASE_RETRY_AFTER_S) } });

const authenticate: Handle = async ({ event, resolve }) => {
	event.locals.station = null;
	const started = performance.now();
	try {
		event.locals.user = await userFromToken(event.cookies.get(SESSION_COOKIE));
		// Stations authenticate with a bearer token on the API only; a browser never sends one.
		const auth = event.request.headers.get('authorization');
		if (auth && event.url.pathname.startsWith('/api/')) {
			const m = /^Bearer\s+(\S+)$/i.exec(auth);
			// A station's writes count against its rate limit in the same lookup.
			const counted = event.request.method !== 'GET' && event.request.method !== 'HEAD';
			event.locals.station = m?.[1] ? await stationFromToken(m[1], counted) : null;
		}
		event.locals.authMs = performance.now() - started;
	} catch (e) {
		if (!isDatabaseUnavailable(e)) throw e;
		if (event.url.pathname.startsWith('/api/')) return unavailableProblem();
		// A page: SvelteKit renders +error.svelte only for errors raised inside a load or action,
		// so the failed session lookup is raised again where the page first asks who is signed in
		// (not "signed out", which would send people to the sign-in page while the database is away).
		Object.defineProperty(event.locals, 'user', {
			configurable: true,
			get: () => {
				throw e;
			}
		});
	}
	return resolve(event);
};

/**
 * A database outage anywhere in a request (marked by handleError) answers 503 with Retry-After
 * instead of 500: a problem document for the API, the error page for people.
 */
const databaseOutage: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (response.status !== 500 || !event.locals.databaseUnavailable) return response;
	if (event.url.pathname.startsWith('/api/')) return unavailableProblem();
	const headers = new Headers(response.headers);
	headers.set('retry-after', String(DATABASE_RETRY_AFTER_S));
	return new Response(response.body, { status: 503, statusText: 'Service Unavailable', headers });
};

/**
 * Every error from /api/ is an RFC 9457 problem document, including the ones SvelteKit makes
 * itself (a thrown error(), an unknown route, a body over the size limit).
 */
const apiProblems: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (!event.url.pathname.startsWith('/api/') || response.status < 400) return response;
	const type = response.headers.get('content-type') ?? '';
	if (type.includes('application/problem+json')) return response;
	let detail = response.statusText || 'Request failed';
	try {
		const text = await response.text();
		const parsed: unknown = type.includes('json') ? JSON.parse(text) : null;
		if (parsed && typeof parsed === 'object' && 'message' in parsed && typeof parsed.message === 'string') detail = parsed.message;
		else if (text && text.length < 300 && !text.startsWith('<')) detail = text;
	} catch {
		// keep the status text
	}
	const headers: Record<string, string> = {};
	for (const h of ['retry-after', 'allow']) {
		const v = response.headers.get(h);
		if (v) headers[h] = v;
	}
	return problem(response.status, detail, { headers });
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('x-content-type-options', 'nosniff');
	response.headers.set('referrer-policy', 'same-origin');
	if (!event.url.pathname.startsWith('/api/')) response.headers.set('x-frame-options', 'DENY');
	return response;
};

export const handle = sequence(securityHeaders, apiProblems, databaseOutage, authenticate);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (status === 404) return { message };
	if (isDatabaseUnavailable(error)) {
		event.locals.databaseUnavailable = true;
		console.error(`[biasline] database unavailable on ${event.request.method} ${event.url.pathname}: ${error instanceof Error ? error.message : String(error)}`);
		return { message: 'The database cannot be reached at the moment. This page works again as soon as it is back, usually within seconds.', unavailable: true };
	}
	const errorId = randomUUID();
	console.error(`[biasline] error ${errorId} on ${event.request.method} ${event.url.pathname}:`, error);
	return { message: 'Something went wrong on our side. The error was logged.', errorId };
};
