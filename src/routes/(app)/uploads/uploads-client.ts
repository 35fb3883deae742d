// The uploads screen's client of /api/v1/uploads: check and stage a file, then import it while
// reading the NDJSON progress lines. Failures come back as values.
export type RowError = { line: number; column: string | null; message: string };
export type Preview = { line: number; cells: Record<string, string> }[];
export type Staged = { upload: { id: number; lot: string; fileName: string; rows: number; parts: number }; columns: string[]; preview: Preview; bins: { bin: number; count: number }[] };
export type StageResult = { ok: true; value: Staged } | { ok: false; status: number; detail: string; errors: RowError[]; columns: string[]; preview: Preview; rows: number };

export async function stageFile(lot: string, fileName: string, text: string): Promise<StageResult> {
	const q = new URLSearchParams({ lot, fileName });
	let res: Response;
	try {
		res = await fetch(`/api/v1/uploads?${q}`, { method: 'POST', headers: { 'content-type': 'text/csv; charset=utf-8', accept: 'application/json' }, body: text });
	} catch {
		return { ok: false, status: 0, detail: 'The server could not be reached', errors: [], columns: [], preview: [], rows: 0 };
	}
	const body = (await res.json().catch(() => ({}))) as Record<string, unknown>;
	if (res.status === 201) return { ok: true, value: body as unknown as Staged };
	const errors = Array.isArray(body.errors) ? (body.errors as { line?: number; column?: string | null; message?: string }[]) : [];
	return {
		ok: false,
		status: res.status,
		detail: typeof body.detail === 'string' ? body.detail : typeof body.message === 'string' ? body.message : `The server answered ${res.status}`,
		errors: errors.map((e) => ({ line: e.line ?? 0, column: e.column ?? null, message: e.message ?? '' })),
		columns: Array.isArray(body.columns) ? (body.columns as string[]) : [],
		preview: Array.isArray(body.preview) ? (body.preview as Preview) : [],
		rows: typeof body.rows === 'number' ? body.rows : 0
	};
}

export type ImportEnd = { ok: true; imported: number; lot: string } | { ok: false; detail: string };

/** Imports a staged upload; `progress(done, total)` is called for every chunk the server reports. */
export async function importStaged(id: number, progress: (done: number, total: number) => void): Promise<ImportEnd> {
	let res: Response;
	try {
		res = await fetch(`/api/v1/uploads/${id}/import`, { method: 'POST', headers: { accept: 'application/x-ndjson' } });
	} catch {
		return { ok: false, detail: 'The server could not be reached; check the upload list before trying again' };
	}
	if (!res.ok || !res.body) {
		const body = (await res.json().catch(() => ({}))) as { detail?: string; message?: string };
		return { ok: false, detail: body.detail ?? body.message ?? `The server answered ${res.status}` };
	}
	const reader = res.body.pipeThrough(new TextDecoderStream()).getReader();
	let buffer = '';
	let end: ImportEnd = { ok: false, detail: 'The import stopped before it finished; nothing was stored unless the upload list says so' };
	for (;;) {
		const { value, done } = await reader.read();
		if (value) buffer += value;
		let nl: number;
		while ((nl = buffer.indexOf('\n')) >= 0) {
			const line = buffer.slice(0, nl);
			buffer = buffer.slice(nl + 1);
			const msg = JSON.parse(line) as { type: string; done?: number; total?: number; imported?: number; lot?: string; detail?: string };
			if (msg.type === 'progress') progress(msg.done ?? 0, msg.total ?? 0);
			else if (msg.type === 'done') end = { ok: true, imported: msg.imported ?? 0, lot: msg.lot ?? '' };
			else if (msg.type === 'error') end = { ok: false, detail: msg.detail ?? 'The import was refused' };
		}
		if (done) break;
	}
	return end;
}

/** Tested parts of a lot (its bin counters), or null. */
export async function lotTested(lot: string): Promise<number | null> {
	const res = await fetch(`/api/v1/lots/${encodeURIComponent(lot)}`, { headers: { accept: 'application/json' } }).catch(() => null);
	if (!res?.ok) return null;
	const body = (await res.json()) as { tested?: number };
	return typeof body.tested === 'number' ? body.tested : null;
}
