import type { Handle, HandleServerError, ServerInit } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { building } from '$app/environment';
import { randomUUID } from 'node:crypto';
import { SESSION_COOKIE, userFromToken } from '$lib/server/auth';
import { problem } from '$lib/server/problem';
import { stationFromToken } from '$lib/server/stations';
import { startMailSender } from '$lib/server/mail/sender';
import { prepareDatabase } from '$lib/server/setup';

export const init: ServerInit = async () => {
	if (building) return;
	await prepareDatabase();
	startMailSender();
};

const authenticate: Handle = async ({ event, resolve }) => {
	event.locals.user = await userFromToken(event.cookies.get(SESSION_COOKIE));
	event.locals.station = null;
	// Stations authenticate with a bearer token on the API only; a browser never sends one.
	const auth = event.request.headers.get('authorization');
	if (auth && event.url.pathname.startsWith('/api/')) {
		const m = /^Bearer\s+(\S+)$/i.exec(auth);
		event.locals.station = m?.[1] ? await stationFromToken(m[1]) : null;
	}
	return resolve(event);
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

export const handle = sequence(securityHeaders, apiProblems, authenticate);

export const handleError: HandleServerError = ({ error, event, status, message }) => {
	if (status === 404) return { message };
	const errorId = randomUUID();
	console.error(`[biasline] error ${errorId} on ${event.request.method} ${event.url.pathname}:`, error);
	return { message: 'Something went wrong on our side. The error was logged.', errorId };
};
