// Stations: set-up, fixture changes, tokens (shown once, stored as SHA-256), and the view a
// station gets of itself.
import { randomBytes } from 'node:crypto';
import { QueryTypes, UniqueConstraintError, type Transaction } from 'sequelize';
import type { Arrangement } from '$lib/measure/types';
import { audit, type Actor } from './audit';
import { sha256, type StationPrincipal } from './auth';
import { db } from './db';
import { run, statement } from './db/prepared';
import { hitUpsert, STATION_LIMITS } from './ratelimit';

export type Fixture = { inductanceH: number; strayF: number; blockingF: number | null; arrangement: Arrangement };
export type CalibrationPolicy = {
	validityHours: number;
	maxResidualPpm: number;
	maxInductanceChangePct: number;
	maxStrayChangeF: number;
};

export type StationRecord = {
	id: number;
	name: string;
	line: string | null;
	lineId: number | null;
	fixture: Fixture;
	calibrationPolicy: CalibrationPolicy;
	active: boolean;
	tokenHint: string | null;
	tokenIssuedAt: string | null;
	currentLotId: number | null;
	lastSeenAt: string | null;
};

type Row = {
	id: string;
	name: string;
	line: string | null;
	line_id: string | null;
	inductance_h: number;
	stray_f: number;
	blocking_f: number | null;
	arrangement: Arrangement;
	cal_validity_hours: number;
	cal_max_residual_ppm: number;
	cal_max_inductance_change_pct: number;
	cal_max_stray_change_f: number;
	active: boolean;
	token_hint: string | null;
	token_issued_at: Date | null;
	current_lot_id: string | null;
	last_seen_at: Date | null;
};

const SELECT = `SELECT s.*, l.name AS line FROM stations s LEFT JOIN lines l ON l.id = s.line_id`;

function plain(r: Row): StationRecord {
	return {
		id: Number(r.id),
		name: r.name,
		line: r.line,
		lineId: r.line_id === null ? null : Number(r.line_id),
		fixture: { inductanceH: r.inductance_h, strayF: r.stray_f, blockingF: r.blocking_f, arrangement: r.arrangement },
		calibrationPolicy: {
			validityHours: r.cal_validity_hours,
			maxResidualPpm: r.cal_max_residual_ppm,
			maxInductanceChangePct: r.cal_max_inductance_change_pct,
			maxStrayChangeF: r.cal_max_stray_change_f
		},
		active: r.active,
		tokenHint: r.token_hint,
		tokenIssuedAt: r.token_issued_at ? r.token_issued_at.toISOString() : null,
		currentLotId: r.current_lot_id === null ? null : Number(r.current_lot_id),
		lastSeenAt: r.last_seen_at ? r.last_seen_at.toISOString() : null
	};
}

/** A new station token: 24 random bytes, so a fast hash suffices (nothing to guess from). */
export function newStationToken(): string {
	return `bst_${randomBytes(24).toString('base64url')}`;
}

export async function getStation(id: number, transaction?: Transaction): Promise<StationRecord | null> {
	const rows = await db().query<Row>(`${SELECT} WHERE s.id = :id`, { replacements: { id }, type: QueryTypes.SELECT, transaction });
	return rows[0] ? plain(rows[0]) : null;
}

export async function getStationByName(name: string): Promise<StationRecord | null> {
	const rows = await db().query<Row>(`${SELECT} WHERE lower(s.name) = lower(:name)`, { replacements: { name }, type: QueryTypes.SELECT });
	return rows[0] ? plain(rows[0]) : null;
}

/**
 * The active station a bearer token belongs to, and, when `$2` is true, its request counted
 * against the station rate limit in the same statement (so a station post costs one round trip
 * for both). Like recordHit, the statement commits without waiting for the disk.
 */
const STATION_BY_TOKEN = statement(
	'station-by-token',
	`WITH quick AS (SELECT set_config('synchronous_commit', 'off', true) AS v),
	 st AS (SELECT id, name FROM stations WHERE token_hash = $1 AND active),
	 hit AS (${hitUpsert({ key: "'station:' || id", from: 'FROM st WHERE CAST($2 AS boolean)', windowParam: '$3' })})
	 SELECT st.id, st.name, h.count, h.remaining, (SELECT v FROM quick) AS quick FROM st LEFT JOIN hit h ON true`
);

/** The active station a bearer token belongs to, or null; `countHit`: count the request against the rate limit too. */
export async function stationFromToken(token: string, countHit = false): Promise<StationPrincipal | null> {
	if (!token.startsWith('bst_') || token.length > 200) return null;
	const [row] = await run<{ id: string; name: string; count: number | null; remaining: number | null }>(STATION_BY_TOKEN, [sha256(token), countHit, STATION_LIMITS.windowS]);
	if (!row) return null;
	const principal: StationPrincipal = { id: Number(row.id), name: row.name };
	if (row.count !== null) principal.hit = { count: row.count, remainingS: row.remaining ?? 0 };
	return principal;
}

async function lineId(name: string | undefined, transaction: Transaction): Promise<number | null> {
	if (!name) return null;
	const rows = await db().query<{ id: string }>(
		`INSERT INTO lines (name) VALUES (:name) ON CONFLICT (name) DO UPDATE SET name = EXCLUDED.name RETURNING id`,
		{ replacements: { name }, type: QueryTypes.SELECT, transaction }
	);
	return rows[0] ? Number(rows[0].id) : null;
}

export type CreateStationResult = { ok: true; station: StationRecord; token: string } | { ok: false; field: string; message: string };

/** Adds a station; returns its token, which is shown this once. */
export async function createStation(
	actor: Actor,
	input: { name: string; line?: string; fixture: Fixture; calibration?: Partial<CalibrationPolicy> }
): Promise<CreateStationResult> {
	const token = newStationToken();
	try {
		return await db().transaction(async (t) => {
			const lid = await lineId(input.line, t);
			const c = input.calibration ?? {};
			const rows = await db().query<{ id: string }>(
				`INSERT INTO stations (name, line_id, inductance_h, stray_f, blocking_f, arrangement, token_hash, token_hint, token_issued_at,
				   cal_validity_hours, cal_max_residual_ppm, cal_max_inductance_change_pct, cal_max_stray_change_f)
				 VALUES (:name, :lid, :l, :stray, :blocking, :arr, :hash, :hint, now(),
				   coalesce(:validity, 8), coalesce(:residual, 200), coalesce(:lchange, 1), coalesce(:schange, 2e-12))
				 RETURNING id`,
				{
					replacements: {
						name: input.name,
						lid,
						l: input.fixture.inductanceH,
						stray: input.fixture.strayF,
						blocking: input.fixture.blockingF,
						arr: input.fixture.arrangement,
						hash: sha256(token),
						hint: token.slice(-4),
						validity: c.validityHours ?? null,
						residual: c.maxResidualPpm ?? null,
						lchange: c.maxInductanceChangePct ?? null,
						schange: c.maxStrayChangeF ?? null
					},
					type: QueryTypes.SELECT,
					transaction: t
				}
			);
			const id = Number(rows[0]?.id);
			const station = await getStation(id, t);
			if (!station) throw new Error('station vanished inside its own transaction');
			await audit(actor, 'station', id, 'create', null, { name: station.name, line: station.line, fixture: station.fixture, calibrationPolicy: station.calibrationPolicy }, t);
			return { ok: true as const, station, token };
		});
	} catch (e) {
		if (e instanceof UniqueConstraintError) return { ok: false, field: 'name', message: 'A station with this name already exists' };
		throw e;
	}
}

/** Changes a station's fixture, line and calibration policy (audited, before and after). */
export async function updateStation(
	actor: Actor,
	id: number,
	input: { line?: string; fixture: Fixture; calibration?: Partial<CalibrationPolicy> }
): Promise<{ ok: true; station: StationRecord } | { ok: false; message: string }> {
	return db().transaction(async (t) => {
		const before = await getStation(id, t);
		if (!before) return { ok: false as const, message: 'No such station' };
		const lid = input.line === undefined ? before.lineId : await lineId(input.line, t);
		const c = { ...before.calibrationPolicy, ...(input.calibration ?? {}) };
		await db().query(
			`UPDATE stations SET line_id = :lid, inductance_h = :l, stray_f = :stray, blocking_f = :blocking, arrangement = :arr,
			   cal_validity_hours = :validity, cal_max_residual_ppm = :residual, cal_max_inductance_change_pct = :lchange,
			   cal_max_stray_change_f = :schange WHERE id = :id`,
			{
				replacements: {
					id,
					lid,
					l: input.fixture.inductanceH,
					stray: input.fixture.strayF,
					blocking: input.fixture.blockingF,
					arr: input.fixture.arrangement,
					validity: c.validityHours,
					residual: c.maxResidualPpm,
					lchange: c.maxInductanceChangePct,
					schange: c.maxStrayChangeF
				},
				transaction: t
			}
		);
		const after = await getStation(id, t);
		if (!after) throw new Error('station vanished inside its own transaction');
		await audit(
			actor,
			'station',
			id,
			'update',
			{ line: before.line, fixture: before.fixture, calibrationPolicy: before.calibrationPolicy },
			{ line: after.line, fixture: after.fixture, calibrationPolicy: after.calibrationPolicy },
			t
		);
		return { ok: true as const, station: after };
	});
}

/** Issues a new token (the old one stops working at once); returns it to show once. */
export async function rotateToken(actor: Actor, id: number): Promise<{ ok: true; token: string } | { ok: false; message: string }> {
	const token = newStationToken();
	const rows = await db().query(
		'UPDATE stations SET token_hash = :h, token_hint = :hint, token_issued_at = now(), active = true WHERE id = :id RETURNING id',
		{ replacements: { id, h: sha256(token), hint: token.slice(-4) }, type: QueryTypes.SELECT }
	);
	if (rows.length === 0) return { ok: false, message: 'No such station' };
	await audit(actor, 'station', id, 'rotate-token', null, { tokenHint: token.slice(-4) });
	return { ok: true, token };
}

/** Revokes the token: the station is refused from the next request on. */
export async function revokeToken(actor: Actor, id: number): Promise<{ ok: true } | { ok: false; message: string }> {
	const rows = await db().query('UPDATE stations SET token_hash = NULL, token_hint = NULL WHERE id = :id RETURNING id', {
		replacements: { id },
		type: QueryTypes.SELECT
	});
	if (rows.length === 0) return { ok: false, message: 'No such station' };
	await audit(actor, 'station', id, 'revoke-token', null, null);
	return { ok: true };
}

/** Loads a lot onto a station (the lot it will post to; shown on the floor and to the station). */
export async function assignLot(actor: Actor, stationId: number, lotId: number | null): Promise<void> {
	await db().query('UPDATE stations SET current_lot_id = :lotId WHERE id = :id', { replacements: { id: stationId, lotId } });
	await audit(actor, 'station', stationId, 'assign-lot', null, { lotId });
}
