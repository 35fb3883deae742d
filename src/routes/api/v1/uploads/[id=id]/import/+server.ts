// Imports a staged upload. The answer is NDJSON, one line per chunk written
// ({"type":"progress","done":n,"total":N}) and a last line {"type":"done",...} sent after the
// commit (or {"type":"error",...} when the import was refused after it started: nothing stored).
import { requireApiArea } from '$lib/server/auth';
import { problem } from '$lib/server/problem';
import { checkImport, importUpload } from '$lib/server/uploads';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ locals, params }) => {
	const user = requireApiArea(locals, 'uploads');
	const id = Number(params.id);
	const check = await checkImport(id);
	if (!check.ok) return problem(check.status, check.detail, { kind: check.kind });
	const encoder = new TextEncoder();
	const stream = new ReadableStream<Uint8Array>({
		async start(controller) {
			let open = true;
			const send = (v: unknown) => {
				if (!open) return;
				try {
					controller.enqueue(encoder.encode(`${JSON.stringify(v)}\n`));
				} catch {
					open = false; // the client went away; the import still finishes (or rolls back) as one transaction
				}
			};
			try {
				const out = await importUpload({ userId: user.id, label: user.email }, id, new Date(), (done, total) => send({ type: 'progress', done, total }));
				send(out.ok ? { type: 'done', imported: out.imported, lot: out.lot, bins: out.bins } : { type: 'error', status: out.status, kind: out.kind, detail: out.detail });
			} catch (e) {
				console.error('upload import failed', e);
				send({ type: 'error', status: 500, kind: 'internal', detail: 'The import failed; nothing was stored' });
			}
			if (open) controller.close();
		}
	});
	return new Response(stream, { status: 200, headers: { 'content-type': 'application/x-ndjson', 'cache-control': 'no-cache' } });
};
