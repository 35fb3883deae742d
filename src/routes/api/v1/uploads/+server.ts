// Bench C–V files: POST the CSV text to check and stage it for a lot; GET lists recent imports.
import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { BENCH_MAX_BYTES } from '$lib/server/bench-csv';
import { problem } from '$lib/server/problem';
import { recentUploads, stageUpload } from '$lib/server/uploads';
import { issueList } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import { UploadQuery } from '$lib/schemas/uploads';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	requireApiArea(locals, 'uploads');
	return json({ uploads: await recentUploads(50) });
};

export const POST: RequestHandler = async ({ locals, request, url }) => {
	const user = requireApiArea(locals, 'uploads');
	const q = UploadQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	if (!/^text\/(csv|plain)\b/i.test(request.headers.get('content-type') ?? '')) return problem(415, 'Send the file as text/csv');
	const declared = Number(request.headers.get('content-length') ?? '0');
	if (declared > BENCH_MAX_BYTES) return problem(413, `The file is larger than ${BENCH_MAX_BYTES / 1024 / 1024} MiB: split it`);
	const bytes = new Uint8Array(await request.arrayBuffer());
	if (bytes.byteLength > BENCH_MAX_BYTES) return problem(413, `The file is larger than ${BENCH_MAX_BYTES / 1024 / 1024} MiB: split it`);
	let text: string;
	try {
		text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
	} catch {
		return problem(400, 'The file is not UTF-8 text', { errors: [{ path: 'body', message: 'not UTF-8' }] });
	}
	const out = await stageUpload({ userId: user.id, label: user.email }, { lotNumber: q.data.lot, fileName: q.data.fileName, text, now: new Date() });
	if (!out.ok) {
		const rowErrors = out.errors.map((e) => ({ path: `line ${e.line}${e.column ? `.${e.column}` : ''}`, message: e.message, line: e.line, column: e.column }));
		const res = problem(out.status, out.detail, { kind: out.kind, errors: rowErrors });
		// The preview travels with the refusal so the screen can show the rows beside their errors.
		const body = { ...((await res.json()) as object), columns: out.columns ?? [], preview: out.preview ?? [], rows: out.rows ?? 0 };
		return json(body, { status: out.status, headers: { 'content-type': 'application/problem+json' } });
	}
	return json({ upload: out.upload, columns: out.columns, preview: out.preview, bins: out.bins }, { status: 201 });
};
