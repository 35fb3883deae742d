// The event log: written inside the transaction that caused the events, announced with
// pg_notify (PostgreSQL delivers it only when that transaction commits) or, for station posts,
// with announce() after the commit; read by every app instance's listener and by reconnecting
// clients (Last-Event-ID).
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from './db';
import { run, statement } from './db/prepared';

export const EVENT_CHANNEL = 'biasline_events';
/** How long events stay replayable (our choice: a shift and a half). */
export const EVENT_RETENTION_HOURS = 12;

export type EventType = 'unit' | 'yield' | 'alarm';
export type NewEvent = { type: EventType; stationId: number | null; lotId: number | null; payload: Record<string, unknown> };
export type StoredEvent = NewEvent & { id: number; at: string };

/** Appends events and announces the newest id to every listener once the transaction commits. */
export async function publish(t: Transaction, events: NewEvent[]): Promise<void> {
	if (events.length === 0) return;
	const rows = await db().query<{ id: string }>(
		`INSERT INTO events (type, station_id, lot_id, payload)
		 SELECT type, station_id, lot_id, payload FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(type text, station_id bigint, lot_id bigint, payload jsonb)
		 RETURNING id`,
		{
			replacements: { rows: JSON.stringify(events.map((e) => ({ type: e.type, station_id: e.stationId, lot_id: e.lotId, payload: e.payload }))) },
			type: QueryTypes.SELECT,
			transaction: t
		}
	);
	const maxId = rows.reduce((m, r) => Math.max(m, Number(r.id)), 0);
	await db().query('SELECT pg_notify(:channel, :id)', { replacements: { channel: EVENT_CHANNEL, id: String(maxId) }, transaction: t });
}

let wakeLocalHub: (() => void) | null = null;
/** The live hub of this process registers how to wake it (live.ts). */
export function onAnnounce(wake: () => void): void {
	wakeLocalHub = wake;
}

/** At most one NOTIFY per this many ms from a process for announce() (our choice: far below the 250 ms a stream may take). */
export const ANNOUNCE_EVERY_MS = 10;
const NOTIFY = statement(
	'announce-events',
	`WITH quick AS (SELECT set_config('synchronous_commit', 'off', true) AS v) SELECT pg_notify('${EVENT_CHANNEL}', '') AS sent, (SELECT v FROM quick) AS quick`
);
let announcing = false;

/**
 * Announces events a station post has committed. A pg_notify inside the post would serialize
 * the commits of every post: PostgreSQL holds a lock on the notification queue from the
 * notifying commit until its WAL flush ends, which the benchmark saw as a third of a busy line's
 * database time. Instead this process's hub is woken at once, and the other instances get one
 * NOTIFY per ANNOUNCE_EVERY_MS at most, sent in a transaction of its own that does not wait for
 * the disk. A lost announcement delays, never loses, an event: every hub also reads the log
 * once a second.
 */
export function announce(): void {
	wakeLocalHub?.();
	if (announcing) return;
	announcing = true;
	setTimeout(() => {
		announcing = false;
		run(NOTIFY, []).catch(() => {});
	}, ANNOUNCE_EVERY_MS).unref();
}

/** Publishes outside an existing transaction (alarm changes made by people). */
export async function publishNow(events: NewEvent[]): Promise<void> {
	await db().transaction(async (t) => {
		// The transaction id first, before the events draw theirs: the live hub's gap rule
		// (live.ts) relies on every event's transaction having an id older than the event's.
		await db().query('SELECT txid_current()', { transaction: t });
		await publish(t, events);
	});
}

/**
 * Events after `afterId` with the snapshot they were read in: `xmin`, the oldest transaction
 * still running, and `xmax`, the first transaction id not yet handed out (PostgreSQL's
 * pg_current_snapshot). One statement, so the events and the snapshot agree.
 */
export async function eventsPage(afterId: number, limit: number): Promise<{ events: StoredEvent[]; xmin: bigint; xmax: bigint }> {
	const rows = await db().query<{ xmin: string; xmax: string; events: (Omit<Row, 'at'> & { at: string })[] | null }>(
		`SELECT CAST(pg_snapshot_xmin(pg_current_snapshot()) AS text) AS xmin, CAST(pg_snapshot_xmax(pg_current_snapshot()) AS text) AS xmax,
		   (SELECT json_agg(e ORDER BY e.id) FROM (SELECT * FROM events WHERE id > $1 ORDER BY id LIMIT $2) e) AS events`,
		{ bind: [afterId, limit], type: QueryTypes.SELECT }
	);
	const r = rows[0];
	return {
		xmin: BigInt(r?.xmin ?? '0'),
		xmax: BigInt(r?.xmax ?? '0'),
		events: (r?.events ?? []).map((e) => ({
			id: Number(e.id),
			at: new Date(e.at).toISOString(),
			type: e.type,
			stationId: e.station_id === null ? null : Number(e.station_id),
			lotId: e.lot_id === null ? null : Number(e.lot_id),
			payload: e.payload
		}))
	};
}

type Row = { id: string; at: Date; type: EventType; station_id: string | null; lot_id: string | null; payload: Record<string, unknown> };

/** Events after `afterId`, oldest first, optionally of one station or lot. */
export async function eventsSince(afterId: number, f: { stationId?: number; lotId?: number; limit?: number; upTo?: number } = {}): Promise<StoredEvent[]> {
	const where = ['id > :afterId'];
	if (f.upTo !== undefined) where.push('id <= :upTo');
	if (f.stationId !== undefined) where.push('station_id = :stationId');
	if (f.lotId !== undefined) where.push('lot_id = :lotId');
	const rows = await db().query<Row>(`SELECT * FROM events WHERE ${where.join(' AND ')} ORDER BY id LIMIT :limit`, {
		replacements: { afterId, upTo: f.upTo, stationId: f.stationId, lotId: f.lotId, limit: f.limit ?? 5000 },
		type: QueryTypes.SELECT
	});
	return rows.map((r) => ({
		id: Number(r.id),
		at: r.at.toISOString(),
		type: r.type,
		stationId: r.station_id === null ? null : Number(r.station_id),
		lotId: r.lot_id === null ? null : Number(r.lot_id),
		payload: r.payload
	}));
}

export async function latestEventId(): Promise<number> {
	const rows = await db().query<{ id: string | null }>('SELECT max(id) AS id FROM events', { type: QueryTypes.SELECT });
	return Number(rows[0]?.id ?? 0);
}

export async function pruneEvents(): Promise<void> {
	await db().query('DELETE FROM events WHERE at < now() - make_interval(hours => :h)', { replacements: { h: EVENT_RETENTION_HOURS } });
}
