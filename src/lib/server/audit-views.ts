// The audit trail as people read it: every entry, filtered by entity type, actor and time range,
// a page at a time, and the same selection as CSV. Read-only: the table refuses UPDATE and DELETE,
// and nothing here writes.
import { QueryTypes } from 'sequelize';
import type { AuditQueryInput } from '$lib/schemas/studies';
import { tableCsv } from './csv';
import { db } from './db';

export type AuditEntry = {
	id: number;
	at: string;
	actor: string;
	entity: string;
	entityId: string;
	action: string;
	before: unknown;
	after: unknown;
};

type Row = { id: string; at: Date; actor: string; entity: string; entity_id: string; action: string; before: unknown; after: unknown };

export type AuditFilter = Pick<AuditQueryInput, 'entity' | 'actor' | 'from' | 'to'>;

/** A time from the filter; a date-time without a zone (the browser's datetime-local) is UTC. */
export function filterTime(text: string): Date {
	return new Date(/T/.test(text) && !/(Z|[+-]\d\d:?\d\d)$/i.test(text) ? `${text}Z` : text);
}

/** The WHERE clause of a filter; the actor matches as a case-insensitive substring. */
export function auditWhere(f: AuditFilter): { sql: string; replacements: Record<string, unknown> } {
	const clauses: string[] = [];
	const replacements: Record<string, unknown> = {};
	if (f.entity) {
		clauses.push('entity = :entity');
		replacements.entity = f.entity;
	}
	if (f.actor) {
		clauses.push("actor ILIKE :actor ESCAPE '\\'");
		replacements.actor = `%${f.actor.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
	}
	if (f.from) {
		clauses.push('at >= :from');
		replacements.from = filterTime(f.from);
	}
	if (f.to) {
		clauses.push('at <= :to');
		replacements.to = filterTime(f.to);
	}
	return { sql: clauses.length ? `WHERE ${clauses.join(' AND ')}` : '', replacements };
}

const plain = (r: Row): AuditEntry => ({
	id: Number(r.id),
	at: r.at.toISOString(),
	actor: r.actor,
	entity: r.entity,
	entityId: r.entity_id,
	action: r.action,
	before: r.before,
	after: r.after
});

/** A page of entries, newest first, with the total that match. */
export async function auditPage(q: AuditQueryInput): Promise<{ total: number; entries: AuditEntry[] }> {
	const where = auditWhere(q);
	const [count] = await db().query<{ n: string }>(`SELECT count(*) AS n FROM audit_entries ${where.sql}`, { replacements: where.replacements, type: QueryTypes.SELECT });
	const rows = await db().query<Row>(`SELECT id, at, actor, entity, entity_id, action, before, after FROM audit_entries ${where.sql} ORDER BY at DESC, id DESC LIMIT :limit OFFSET :offset`, {
		replacements: { ...where.replacements, limit: q.limit, offset: q.offset },
		type: QueryTypes.SELECT
	});
	return { total: Number(count?.n ?? 0), entries: rows.map(plain) };
}

/** The entity types present in the trail, for the filter. */
export async function auditEntities(): Promise<string[]> {
	const rows = await db().query<{ entity: string }>('SELECT DISTINCT entity FROM audit_entries ORDER BY entity', { type: QueryTypes.SELECT });
	return rows.map((r) => r.entity);
}

/** Most rows one CSV export holds (our choice; narrow the filter for more). */
export const AUDIT_CSV_MAX_ROWS = 100_000;

/** Every matching entry (up to the cap), oldest first, as CSV with before/after as JSON text. */
export async function auditCsv(f: AuditFilter): Promise<string> {
	const where = auditWhere(f);
	const rows = await db().query<Row>(`SELECT id, at, actor, entity, entity_id, action, before, after FROM audit_entries ${where.sql} ORDER BY at, id LIMIT :max`, {
		replacements: { ...where.replacements, max: AUDIT_CSV_MAX_ROWS },
		type: QueryTypes.SELECT
	});
	return tableCsv(
		['id', 'at', 'actor', 'entity', 'entityId', 'action', 'before', 'after'],
		rows.map(plain).map((e) => [e.id, e.at, e.actor, e.entity, e.entityId, e.action, e.before === null ? '' : JSON.stringify(e.before), e.after === null ? '' : JSON.stringify(e.after)])
	);
}
