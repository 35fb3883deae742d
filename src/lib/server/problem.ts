// RFC 9457 problem documents: the one shape of every API error.
import { json } from '@sveltejs/kit';

export type ProblemIssue = { path: string; message: string };

const TITLES: Record<number, string> = {
	400: 'Invalid request',
	401: 'Not signed in',
	403: 'Not allowed',
	404: 'Not found',
	405: 'Method not allowed',
	409: 'Conflict with the current state',
	413: 'Request body too large',
	415: 'Unsupported media type',
	429: 'Too many requests',
	500: 'Internal error',
	503: 'Service unavailable'
};

/** The problem type URI for a status, or for a named conflict kind (e.g. `calibration-required`). */
export function problemType(status: number, kind?: string): string {
	return `https://biasline.example/problems/${kind ?? String(status)}`;
}

/** A problem+json response. */
export function problem(
	status: number,
	detail: string,
	opts: { errors?: ProblemIssue[]; kind?: string; headers?: Record<string, string>; title?: string } = {}
): Response {
	const body = {
		type: problemType(status, opts.kind),
		title: opts.title ?? TITLES[status] ?? 'Error',
		status,
		detail,
		...(opts.errors ? { errors: opts.errors } : {})
	};
	return json(body, { status, headers: { 'content-type': 'application/problem+json', ...opts.headers } });
}

/** Reads a JSON body: the value, or a 400/415 problem response for a body that is not JSON. */
export async function readJson(request: Request): Promise<{ ok: true; value: unknown } | { ok: false; response: Response }> {
	const type = request.headers.get('content-type') ?? '';
	if (!/^application\/([\w.+-]+\+)?json\b/i.test(type)) {
		return { ok: false, response: problem(415, 'Send the body as application/json') };
	}
	try {
		return { ok: true, value: await request.json() };
	} catch {
		return { ok: false, response: problem(400, 'The body is not valid JSON', { errors: [{ path: '', message: 'not valid JSON' }] }) };
	}
}
