// Bench C–V uploads: check a file against a lot (nothing stored when any row is bad), stage it,
// then import it once as `bench` parts in one transaction, a multi-row INSERT per chunk. Bench
// parts count in the lot's bin counters (so in its yield) but feed no control chart and no
// station's rolling yield (they have no station).
import { createHash } from 'node:crypto';
import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { judgeCapacitances } from '$lib/measure';
import { validateSpecPlan } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import { audit, type Actor } from './audit';
import { parseBenchCsv, type BenchParse, type BenchPart, type RowError } from './bench-csv';
import { db } from './db';
import { getLot, type LotRecord } from './lots';

/** Parts per INSERT statement (and per progress step). */
export const IMPORT_CHUNK_PARTS = 500;

export type UploadSummary = {
	id: number;
	lot: string;
	productCode: string;
	fileName: string;
	status: 'staged' | 'imported';
	rows: number;
	parts: number;
	createdAt: string;
	importedAt: string | null;
};

export type StageOutcome =
	| { ok: true; upload: UploadSummary; columns: string[]; preview: BenchParse['preview']; bins: { bin: number; count: number }[] }
	| { ok: false; status: 400 | 404 | 409; kind: string; detail: string; errors: RowError[]; columns?: string[]; preview?: BenchParse['preview']; rows?: number };

type PlanRow = { id: string; version: number; plan: SpecPlan; created_at: Date };

/** The plan version in force at a time (the newest created at or before it, else the first), as the station ingest does. */
function planAt(versions: PlanRow[], at: Date): PlanRow | undefined {
	let chosen: PlanRow | undefined;
	for (const v of versions) if (v.created_at <= at && (!chosen || v.version > chosen.version)) chosen = v;
	return chosen ?? versions.reduce<PlanRow | undefined>((a, v) => (!a || v.version < a.version ? v : a), undefined);
}

/** Why a lot takes no upload, or null. */
function lotRefusal(lot: LotRecord): string | null {
	if (lot.status !== 'open') return `Lot ${lot.number} is closed: bench parts go into open lots only`;
	if (lot.disposition === 'held') return `Lot ${lot.number} is on hold: release it or choose another lot`;
	return null;
}

type Judged = { part: BenchPart; planVersionId: number; bin: number; pass: boolean; fit: ReturnType<typeof judgeCapacitances>['fit']; failures: { test: string; value: number | null; low: number | null; high: number | null }[] };

async function judgeParts(lot: LotRecord, parts: BenchPart[]): Promise<{ judged: Judged[]; errors: RowError[] }> {
	const versions = await db().query<PlanRow>('SELECT id, version, plan, created_at FROM plan_versions WHERE product_id = :pid', { replacements: { pid: lot.productId }, type: QueryTypes.SELECT });
	const judged: Judged[] = [];
	const errors: RowError[] = [];
	for (const part of parts) {
		const version = planAt(versions, new Date(part.testedAt));
		if (!version || !validateSpecPlan(version.plan).ok) {
			errors.push({ line: part.line, column: null, message: `The product ${lot.productCode} has no usable plan` });
			continue;
		}
		const r = judgeCapacitances({ plan: version.plan, points: part.points, leakageA: part.leakageA });
		judged.push({
			part,
			planVersionId: Number(version.id),
			bin: r.judgement.bin,
			pass: r.judgement.pass,
			fit: r.fit,
			failures: r.judgement.failures.map(({ test, value, low, high }) => ({ test, value, low, high }))
		});
	}
	return { judged, errors };
}

const sha256 = (text: string) => createHash('sha256').update(text).digest('hex');

type UploadRow = { id: string; lot_id: string; number: string; code: string; file_name: string; file_sha256: string; content: string; rows: number; parts: number; status: 'staged' | 'imported'; created_at: Date; imported_at: Date | null };

const summary = (r: UploadRow): UploadSummary => ({
	id: Number(r.id),
	lot: r.number,
	productCode: r.code,
	fileName: r.file_name,
	status: r.status,
	rows: r.rows,
	parts: r.parts,
	createdAt: r.created_at.toISOString(),
	importedAt: r.imported_at ? r.imported_at.toISOString() : null
});

async function earlierImport(lotId: number, hash: string): Promise<UploadRow | null> {
	const rows = await db().query<UploadRow>(
		`SELECT u.*, l.number, p.code FROM uploads u JOIN lots l ON l.id = u.lot_id JOIN products p ON p.id = l.product_id
		 WHERE u.lot_id = :lotId AND u.file_sha256 = :hash AND u.status = 'imported'`,
		{ replacements: { lotId, hash }, type: QueryTypes.SELECT }
	);
	return rows[0] ?? null;
}

/**
 * Checks a bench file for a lot: every row, every part judged by the plan in force at its test
 * time. With any error nothing is stored; otherwise the file is staged and its id returned.
 */
export async function stageUpload(actor: Actor, input: { lotNumber: string; fileName: string; text: string; now: Date }): Promise<StageOutcome> {
	const lot = await getLot(input.lotNumber);
	if (!lot) return { ok: false, status: 404, kind: 'lot-not-found', detail: `No lot ${input.lotNumber}`, errors: [] };
	const refusal = lotRefusal(lot);
	if (refusal) return { ok: false, status: 409, kind: 'lot-not-open', detail: refusal, errors: [] };
	const parsed = parseBenchCsv(input.text, { defaultTestedAt: input.now.toISOString() });
	const base = { columns: parsed.columns, preview: parsed.preview, rows: parsed.rows };
	if (parsed.errors.length) return { ok: false, status: 400, kind: 'invalid-rows', detail: `${parsed.errors.length === 1 ? 'One row needs' : 'Some rows need'} fixing; nothing was imported`, errors: parsed.errors, ...base };
	const hash = sha256(input.text);
	const earlier = await earlierImport(lot.id, hash);
	if (earlier) {
		return { ok: false, status: 409, kind: 'already-imported', detail: `This file was already imported into lot ${lot.number} (${earlier.parts} parts, upload ${earlier.id})`, errors: [], ...base };
	}
	const { judged, errors } = await judgeParts(lot, parsed.parts);
	if (errors.length) return { ok: false, status: 400, kind: 'invalid-rows', detail: 'Some parts cannot be judged; nothing was imported', errors, ...base };
	const bins = new Map<number, number>();
	for (const j of judged) bins.set(j.bin, (bins.get(j.bin) ?? 0) + 1);
	// Staged files nobody imported are dropped after a day (our choice).
	await db().query("DELETE FROM uploads WHERE status = 'staged' AND created_at < now() - interval '1 day'");
	const [row] = await db().query<{ id: string; created_at: Date }>(
		`INSERT INTO uploads (lot_id, file_name, file_sha256, content, rows, parts, created_by) VALUES (:lotId, :name, :hash, :content, :rows, :parts, :by) RETURNING id, created_at`,
		{ replacements: { lotId: lot.id, name: input.fileName, hash, content: input.text, rows: parsed.rows, parts: parsed.parts.length, by: actor.userId }, type: QueryTypes.SELECT }
	);
	return {
		ok: true,
		upload: { id: Number(row?.id), lot: lot.number, productCode: lot.productCode, fileName: input.fileName, status: 'staged', rows: parsed.rows, parts: parsed.parts.length, createdAt: (row?.created_at ?? input.now).toISOString(), importedAt: null },
		columns: parsed.columns,
		preview: parsed.preview,
		bins: [...bins].sort((a, b) => a[0] - b[0]).map(([bin, count]) => ({ bin, count }))
	};
}

export async function getUpload(id: number): Promise<UploadSummary | null> {
	const rows = await db().query<UploadRow>(
		`SELECT u.*, l.number, p.code FROM uploads u JOIN lots l ON l.id = u.lot_id JOIN products p ON p.id = l.product_id WHERE u.id = :id`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	return rows[0] ? summary(rows[0]) : null;
}

export async function recentUploads(limit = 20): Promise<(UploadSummary & { by: string | null })[]> {
	const rows = await db().query<UploadRow & { email: string | null }>(
		`SELECT u.id, u.lot_id, u.file_name, u.file_sha256, '' AS content, u.rows, u.parts, u.status, u.created_at, u.imported_at, l.number, p.code, w.email
		 FROM uploads u JOIN lots l ON l.id = u.lot_id JOIN products p ON p.id = l.product_id LEFT JOIN users w ON w.id = u.imported_by
		 WHERE u.status = 'imported' ORDER BY u.imported_at DESC LIMIT :limit`,
		{ replacements: { limit }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ ...summary(r), by: r.email }));
}

export type ImportCheck = { ok: true; upload: UploadSummary } | { ok: false; status: 404 | 409; kind: string; detail: string };

/** Whether a staged upload can be imported now (checked again inside the import). */
export async function checkImport(id: number): Promise<ImportCheck> {
	const upload = await getUpload(id);
	if (!upload) return { ok: false, status: 404, kind: 'not-found', detail: 'No such upload (a staged file is kept for a day)' };
	if (upload.status === 'imported') return { ok: false, status: 409, kind: 'already-imported', detail: `Upload ${id} was already imported (${upload.parts} parts)` };
	const lot = await getLot(upload.lot);
	const refusal = lot ? lotRefusal(lot) : 'The lot is gone';
	if (refusal) return { ok: false, status: 409, kind: 'lot-not-open', detail: refusal };
	return { ok: true, upload };
}

export type ImportOutcome = { ok: true; imported: number; lot: string; bins: { bin: number; count: number }[] } | { ok: false; status: 404 | 409 | 400; kind: string; detail: string };

class Refused extends Error {
	constructor(
		readonly status: 404 | 409 | 400,
		readonly kind: string,
		detail: string
	) {
		super(detail);
	}
}

/**
 * Imports a staged upload in one transaction (all parts or none), reporting progress after each
 * chunk. The upload row is locked and marked imported in the same transaction, so a repeated or
 * concurrent import of it, or of the same file into the same lot, stores nothing twice. Audited.
 */
export async function importUpload(actor: Actor, id: number, now: Date, onProgress: (done: number, total: number) => void): Promise<ImportOutcome> {
	try {
		return await db().transaction(async (t) => {
			const rows = await db().query<UploadRow>('SELECT u.*, l.number, p.code FROM uploads u JOIN lots l ON l.id = u.lot_id JOIN products p ON p.id = l.product_id WHERE u.id = :id FOR UPDATE OF u', {
				replacements: { id },
				type: QueryTypes.SELECT,
				transaction: t
			});
			const up = rows[0];
			if (!up) throw new Refused(404, 'not-found', 'No such upload');
			if (up.status === 'imported') throw new Refused(409, 'already-imported', `Upload ${id} was already imported (${up.parts} parts)`);
			const lot = await getLot(up.number);
			if (!lot) throw new Refused(404, 'lot-not-found', 'The lot is gone');
			// Lock the lot against closing or holding while its parts go in.
			await db().query('SELECT 1 FROM lots WHERE id = :id FOR SHARE', { replacements: { id: lot.id }, transaction: t });
			const locked = await getLot(up.number);
			const refusal = locked ? lotRefusal(locked) : 'The lot is gone';
			if (refusal) throw new Refused(409, 'lot-not-open', refusal);
			const parsed = parseBenchCsv(up.content, { defaultTestedAt: up.created_at.toISOString() });
			if (parsed.errors.length) throw new Refused(400, 'invalid-rows', 'The staged file no longer parses');
			const { judged, errors } = await judgeParts(lot, parsed.parts);
			if (errors.length) throw new Refused(400, 'invalid-rows', errors[0]?.message ?? 'A part cannot be judged');
			const total = judged.length;
			const source = `upload:${up.file_name}`;
			const perBin = new Map<number, number>();
			onProgress(0, total);
			for (let from = 0; from < total; from += IMPORT_CHUNK_PARTS) {
				const chunk = judged.slice(from, from + IMPORT_CHUNK_PARTS).map((j) => {
					perBin.set(j.bin, (perBin.get(j.bin) ?? 0) + 1);
					return {
						lot_id: lot.id,
						plan_version_id: j.planVersionId,
						upload_id: id,
						serial: j.part.serial,
						source,
						tested_at: j.part.testedAt,
						temperature_c: j.part.temperatureC,
						leakage_a: j.part.leakageA,
						bin: j.bin,
						pass: j.pass,
						bias_v: j.part.points.map((p) => p.biasV),
						capacitance_f: j.part.points.map((p) => p.capacitanceF),
						q: j.part.points.some((p) => p.q !== null) ? j.part.points.map((p) => p.q) : null,
						cj0_f: j.fit?.cj0F ?? null,
						vj_v: j.fit?.vjV ?? null,
						m: j.fit?.m ?? null,
						cp_f: j.fit?.cpF ?? null,
						fit_rms_pct: j.fit?.rmsPct ?? null,
						failures: j.failures
					};
				});
				await db().query(
					`INSERT INTO units (lot_id, station_id, plan_version_id, calibration_id, upload_id, serial, kind, source, tested_at, temperature_c, leakage_a,
					   bin, pass, bias_v, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures)
					 SELECT lot_id, NULL, plan_version_id, NULL, upload_id, serial, 'bench', source, tested_at, temperature_c, leakage_a,
					   bin, pass, bias_v, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures
					 FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(lot_id bigint, plan_version_id bigint, upload_id bigint, serial text, source text,
					   tested_at timestamptz, temperature_c float8, leakage_a float8, bin smallint, pass boolean, bias_v float8[], capacitance_f float8[], q float8[],
					   cj0_f float8, vj_v float8, m float8, cp_f float8, fit_rms_pct float8, failures jsonb)`,
					{ replacements: { rows: JSON.stringify(chunk) }, transaction: t }
				);
				onProgress(Math.min(total, from + IMPORT_CHUNK_PARTS), total);
			}
			const bins = [...perBin].sort((a, b) => a[0] - b[0]).map(([bin, count]) => ({ bin, count }));
			await db().query(
				`INSERT INTO lot_bin_counts (lot_id, bin, shard, n) SELECT :lotId, bin, 0, count FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(bin smallint, count bigint)
				 ON CONFLICT (lot_id, bin, shard) DO UPDATE SET n = lot_bin_counts.n + EXCLUDED.n`,
				{ replacements: { lotId: lot.id, rows: JSON.stringify(bins) }, transaction: t }
			);
			await db().query("UPDATE uploads SET status = 'imported', imported_by = :by, imported_at = :now WHERE id = :id", { replacements: { by: actor.userId, now, id }, transaction: t });
			await audit(actor, 'upload', id, 'import', null, { fileName: up.file_name, lot: lot.number, parts: total, rows: up.rows, sha256: up.file_sha256, bins }, t);
			return { ok: true as const, imported: total, lot: lot.number, bins };
		});
	} catch (e) {
		if (e instanceof Refused) return { ok: false, status: e.status, kind: e.kind, detail: e.message };
		if (e instanceof UniqueConstraintError) return { ok: false, status: 409, kind: 'already-imported', detail: 'This file was already imported into this lot' };
		throw e;
	}
}
