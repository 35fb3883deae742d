import { json } from '@sveltejs/kit';
import { requireStation } from '$lib/server/auth';
import { problem } from '$lib/server/problem';
import { stationOverLimit } from '$lib/server/ratelimit';
import { ingestResults, requestHash } from '$lib/server/results';
import { issueList } from '$lib/schemas/form';
import { IdempotencyKey, ResultsBody } from '$lib/schemas/station-api';
import type { RequestHandler } from './$types';

// 500 units of 32 points with every field is about 900 kB; the limit leaves room and no more.
const MAX_BODY_BYTES = 1_048_576;
// The unread rest of the body makes the connection unusable: tell the client not to reuse it.
const tooLarge = () =>
	problem(413, `A results body may be at most ${MAX_BODY_BYTES} bytes; send fewer units per request`, { headers: { connection: 'close' } });

export const POST: RequestHandler = async ({ request, locals, url }) => {
	const station = requireStation(locals);
	const limitStart = performance.now();
	const wait = await stationOverLimit(station);
	const limitMs = performance.now() - limitStart;
	if (wait !== null) return problem(429, 'Too many requests from this station', { headers: { 'retry-after': String(wait) } });
	const key = IdempotencyKey.safeParse(request.headers.get('idempotency-key') ?? '');
	if (!key.success) {
		return problem(400, 'Send an Idempotency-Key header of 1 to 255 printable characters', {
			errors: [{ path: 'header.Idempotency-Key', message: 'required, 1-255 printable ASCII characters' }]
		});
	}
	if (!/^application\/([\w.+-]+\+)?json\b/i.test(request.headers.get('content-type') ?? '')) return problem(415, 'Send the body as application/json');
	if (Number(request.headers.get('content-length') ?? 0) > MAX_BODY_BYTES) return tooLarge();
	const parseStart = performance.now();
	const raw = await request.text();
	if (raw.length > MAX_BODY_BYTES) return tooLarge();
	let value: unknown;
	try {
		value = JSON.parse(raw);
	} catch {
		return problem(400, 'The body is not valid JSON', { errors: [{ path: '', message: 'not valid JSON' }] });
	}
	const parsed = ResultsBody.safeParse(value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors; nothing was stored', { errors: issueList(parsed.error) });
	const parseMs = performance.now() - parseStart;
	const outcome = await ingestResults(station, key.data, requestHash(raw), parsed.data, new Date(), url.origin);
	if (!outcome.ok) return problem(outcome.status, outcome.detail, { kind: outcome.kind, errors: outcome.errors });
	const headers: Record<string, string> = outcome.replayed ? { 'idempotent-replayed': 'true' } : {};
	// Server-Timing (W3C): where the post's time went, for benchmarks and station logs.
	if (outcome.timings) {
		const t = outcome.timings;
		headers['server-timing'] = Object.entries({ auth: locals.authMs ?? 0, limit: limitMs, parse: parseMs, context: t.contextMs, judge: t.judgeMs, spc: t.spcMs, write: t.writeMs, commit: t.commitMs })
			.map(([name, ms]) => `${name};dur=${ms.toFixed(2)}`)
			.join(', ')
			.concat(`, alarms;desc="${t.violations}", tries;desc="${t.tries ?? 1}"`);
	}
	return json(outcome.body, { status: outcome.status, headers });
};
