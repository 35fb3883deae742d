// Alarms: read with filters, acknowledge (operator and up), close with cause and action (engineer and up).
import { QueryTypes } from 'sequelize';
import { audit, type Actor } from './audit';
import { db } from './db';
import { publishNow } from './events';

export type AlarmStatus = 'open' | 'acknowledged' | 'closed';

export type AlarmRecord = {
	id: number;
	rule: string;
	description: string;
	chart: { id: number; kind: string; characteristic: string; unit: string };
	station: string;
	line: string | null;
	productCode: string;
	lot: string | null;
	unitSerial: string | null;
	at: string;
	lastAt: string;
	firstSeq: number;
	lastSeq: number;
	occurrences: number;
	status: AlarmStatus;
	suspect: 'tester' | 'product' | 'lot' | null;
	reasoning: string;
	acknowledgedAt: string | null;
	acknowledgedBy: string | null;
	closedAt: string | null;
	closedBy: string | null;
	cause: string | null;
	action: string | null;
};

type Row = {
	id: string;
	rule: string;
	description: string;
	chart_id: string;
	kind: string;
	characteristic: string;
	unit: string;
	station: string;
	line: string | null;
	code: string;
	lot: string | null;
	serial: string | null;
	opened_at: Date;
	last_at: Date;
	first_seq: number;
	last_seq: number;
	occurrences: number;
	status: AlarmStatus;
	suspect: AlarmRecord['suspect'];
	reasoning: string;
	acknowledged_at: Date | null;
	ack_by: string | null;
	closed_at: Date | null;
	closed_by_email: string | null;
	cause: string | null;
	action: string | null;
};

const iso = (d: Date | null) => (d ? d.toISOString() : null);

const plain = (r: Row): AlarmRecord => ({
	id: Number(r.id),
	rule: r.rule,
	description: r.description,
	chart: { id: Number(r.chart_id), kind: r.kind, characteristic: r.characteristic, unit: r.unit },
	station: r.station,
	line: r.line,
	productCode: r.code,
	lot: r.lot,
	unitSerial: r.serial,
	at: r.opened_at.toISOString(),
	lastAt: r.last_at.toISOString(),
	firstSeq: r.first_seq,
	lastSeq: r.last_seq,
	occurrences: r.occurrences,
	status: r.status,
	suspect: r.suspect,
	reasoning: r.reasoning,
	acknowledgedAt: iso(r.acknowledged_at),
	acknowledgedBy: r.ack_by,
	closedAt: iso(r.closed_at),
	closedBy: r.closed_by_email,
	cause: r.cause,
	action: r.action
});

export type AlarmFilter = { status?: AlarmStatus; station?: string; product?: string; lot?: string; limit?: number };

export async function listAlarms(f: AlarmFilter = {}): Promise<AlarmRecord[]> {
	const where: string[] = [];
	if (f.status) where.push('a.status = :status');
	if (f.station) where.push('lower(s.name) = lower(:station)');
	if (f.product) where.push('lower(p.code) = lower(:product)');
	if (f.lot) where.push('l.number = :lot');
	const rows = await db().query<Row>(
		`SELECT a.*, c.kind, c.characteristic, c.unit, s.name AS station, ln.name AS line, p.code, l.number AS lot, u.serial,
		   ua.email AS ack_by, uc.email AS closed_by_email
		 FROM alarms a JOIN charts c ON c.id = a.chart_id JOIN stations s ON s.id = c.station_id JOIN products p ON p.id = c.product_id
		 LEFT JOIN lines ln ON ln.id = s.line_id LEFT JOIN lots l ON l.id = a.lot_id LEFT JOIN units u ON u.id = a.unit_id
		 LEFT JOIN users ua ON ua.id = a.acknowledged_by LEFT JOIN users uc ON uc.id = a.closed_by
		 ${where.length ? `WHERE ${where.join(' AND ')}` : ''} ORDER BY a.opened_at DESC, a.id DESC LIMIT :limit`,
		{ replacements: { ...f, limit: f.limit ?? 200 }, type: QueryTypes.SELECT }
	);
	return rows.map(plain);
}

export async function getAlarm(id: number): Promise<AlarmRecord | null> {
	const rows = await db().query<Row>(
		`SELECT a.*, c.kind, c.characteristic, c.unit, s.name AS station, ln.name AS line, p.code, l.number AS lot, u.serial,
		   ua.email AS ack_by, uc.email AS closed_by_email
		 FROM alarms a JOIN charts c ON c.id = a.chart_id JOIN stations s ON s.id = c.station_id JOIN products p ON p.id = c.product_id
		 LEFT JOIN lines ln ON ln.id = s.line_id LEFT JOIN lots l ON l.id = a.lot_id LEFT JOIN units u ON u.id = a.unit_id
		 LEFT JOIN users ua ON ua.id = a.acknowledged_by LEFT JOIN users uc ON uc.id = a.closed_by WHERE a.id = :id`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	return rows[0] ? plain(rows[0]) : null;
}

export type AlarmChange = { ok: true; alarm: AlarmRecord } | { ok: false; status: 404 | 409; message: string };

/** Acknowledges an open alarm ("seen, someone is on it"). */
export async function acknowledgeAlarm(actor: Actor, id: number): Promise<AlarmChange> {
	const rows = await db().query(
		"UPDATE alarms SET status = 'acknowledged', acknowledged_at = now(), acknowledged_by = :by WHERE id = :id AND status = 'open' RETURNING id",
		{ replacements: { id, by: actor.userId }, type: QueryTypes.SELECT }
	);
	const alarm = await getAlarm(id);
	if (!alarm) return { ok: false, status: 404, message: 'No such alarm' };
	if (rows.length === 0) return { ok: false, status: 409, message: `The alarm is ${alarm.status}, not open` };
	await audit(actor, 'alarm', id, 'acknowledge', { status: 'open' }, { status: 'acknowledged' });
	await announce(alarm);
	return { ok: true, alarm };
}

/** Closes an alarm with its cause and corrective action; a later violation opens a new one. */
export async function closeAlarm(actor: Actor, id: number, cause: string, action: string): Promise<AlarmChange> {
	const before = await getAlarm(id);
	if (!before) return { ok: false, status: 404, message: 'No such alarm' };
	const rows = await db().query(
		"UPDATE alarms SET status = 'closed', closed_at = now(), closed_by = :by, cause = :cause, action = :action WHERE id = :id AND status <> 'closed' RETURNING id",
		{ replacements: { id, by: actor.userId, cause, action }, type: QueryTypes.SELECT }
	);
	if (rows.length === 0) return { ok: false, status: 409, message: 'The alarm is already closed' };
	await audit(actor, 'alarm', id, 'close', { status: before.status }, { status: 'closed', cause, action });
	const alarm = await getAlarm(id);
	if (!alarm) return { ok: false, status: 404, message: 'No such alarm' };
	await announce(alarm);
	return { ok: true, alarm };
}

/** An `alarm` event on the live stream for a changed alarm. */
async function announce(a: AlarmRecord): Promise<void> {
	const rows = await db().query<{ station_id: string; lot_id: string | null }>(
		'SELECT c.station_id, a.lot_id FROM alarms a JOIN charts c ON c.id = a.chart_id WHERE a.id = :id',
		{ replacements: { id: a.id }, type: QueryTypes.SELECT }
	);
	const row = rows[0];
	await publishNow([
		{
			type: 'alarm',
			stationId: row ? Number(row.station_id) : null,
			lotId: row?.lot_id ? Number(row.lot_id) : null,
			payload: { id: a.id, rule: a.rule, chart: a.chart.characteristic, kind: a.chart.kind, station: a.station, lot: a.lot, status: a.status, suspect: a.suspect, description: a.description }
		}
	]);
}

/**
 * Alarms for the alarms screen: `active` means still needing a person (open or acknowledged),
 * `all` means every status; newest first, at most `limit` (default 200).
 */
export async function listAlarmsForScreen(f: Omit<AlarmFilter, 'status'> & { status: AlarmStatus | 'active' | 'all' }): Promise<AlarmRecord[]> {
	const { status, ...rest } = f;
	if (status === 'all') return listAlarms(rest);
	if (status !== 'active') return listAlarms({ ...rest, status });
	const [open, acknowledged] = await Promise.all([listAlarms({ ...rest, status: 'open' }), listAlarms({ ...rest, status: 'acknowledged' })]);
	return [...open, ...acknowledged].sort((a, b) => b.at.localeCompare(a.at) || b.id - a.id).slice(0, rest.limit ?? 200);
}

/** Stations, products and lots that have alarms, for the screen's filters. */
export async function alarmFilterOptions(): Promise<{ stations: string[]; products: string[]; lots: string[] }> {
	const rows = await db().query<{ station: string; code: string; lot: string | null }>(
		`SELECT DISTINCT s.name AS station, p.code, l.number AS lot
		 FROM alarms a JOIN charts c ON c.id = a.chart_id JOIN stations s ON s.id = c.station_id JOIN products p ON p.id = c.product_id
		 LEFT JOIN lots l ON l.id = a.lot_id`,
		{ type: QueryTypes.SELECT }
	);
	const sorted = (xs: (string | null)[]) => [...new Set(xs.filter((x): x is string => x !== null))].sort();
	return { stations: sorted(rows.map((r) => r.station)), products: sorted(rows.map((r) => r.code)), lots: sorted(rows.map((r) => r.lot)) };
}
