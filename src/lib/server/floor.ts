// The live floor: one tile per station and the totals per line.
import { QueryTypes } from 'sequelize';
import { db } from './db';
import type { FloorTile, FloorView, TileState } from '$lib/floor-types';
import { ROLLING_YIELD_PARTS } from './results';

export type { FloorTile, FloorView, TileState };

/** Seconds without a post after which a station counts as idle, then offline (our choice). */
export const TESTING_WITHIN_S = 60;
export const OFFLINE_AFTER_S = 10 * 60;
/** A calibration ending within this many minutes is shown as due. */
export const CALIBRATION_DUE_MIN = 30;

type Row = {
	name: string;
	line: string | null;
	lot: string | null;
	code: string | null;
	last_seen_at: Date | null;
	valid_until: Date | null;
	parts_hour: string;
	rolling_tested: string;
	rolling_passed: string;
	open_alarms: string;
	idle_s: number | null;
	due: boolean;
};

/** Testing, idle or offline by the time since the last post; a due calibration shows while active. */
export function tileState(idleS: number | null, calibrationDue: boolean): TileState {
	if (idleS === null || idleS > OFFLINE_AFTER_S) return 'offline';
	if (calibrationDue) return 'calibration-due';
	return idleS <= TESTING_WITHIN_S ? 'testing' : 'idle';
}

/** The state of every active station at `now` (the database's clock). */
export async function floorView(): Promise<FloorView> {
	const rows = await db().query<Row>(
		`SELECT s.name, ln.name AS line, l.number AS lot, p.code, s.last_seen_at, cal.valid_until,
		   (SELECT coalesce(sum(m.production), 0) FROM station_minute_counts m WHERE m.station_id = s.id AND m.minute > now() - interval '1 hour') AS parts_hour,
		   r.tested AS rolling_tested, r.passed AS rolling_passed,
		   (SELECT count(*) FROM alarms a JOIN charts c ON c.id = a.chart_id WHERE c.station_id = s.id AND a.status <> 'closed') AS open_alarms,
		   extract(epoch FROM now() - s.last_seen_at)::float8 AS idle_s,
		   (cal.valid_until IS NULL OR cal.valid_until < now() + make_interval(mins => :dueMin)) AS due
		 FROM stations s
		 LEFT JOIN lines ln ON ln.id = s.line_id
		 LEFT JOIN lots l ON l.id = s.current_lot_id
		 LEFT JOIN products p ON p.id = l.product_id
		 LEFT JOIN LATERAL (SELECT valid_until FROM calibrations c WHERE c.station_id = s.id ORDER BY at DESC, id DESC LIMIT 1) cal ON true
		 LEFT JOIN LATERAL (SELECT count(*) AS tested, count(*) FILTER (WHERE pass) AS passed FROM
		   (SELECT pass FROM units u WHERE u.station_id = s.id AND u.kind = 'production' ORDER BY u.id DESC LIMIT :window) w) r ON true
		 WHERE s.active
		 ORDER BY ln.name NULLS LAST, s.name`,
		{ replacements: { window: ROLLING_YIELD_PARTS, dueMin: CALIBRATION_DUE_MIN }, type: QueryTypes.SELECT }
	);
	const tiles: FloorTile[] = rows.map((r) => {
		const tested = Number(r.rolling_tested);
		const state = tileState(r.idle_s, r.due);
		return {
			station: r.name,
			line: r.line,
			state,
			lot: r.lot,
			productCode: r.code,
			partsLastHour: Number(r.parts_hour),
			rollingYieldPct: tested ? (100 * Number(r.rolling_passed)) / tested : null,
			rollingWindow: tested,
			openAlarms: Number(r.open_alarms),
			lastSeenAt: r.last_seen_at ? r.last_seen_at.toISOString() : null,
			calibrationValidUntil: r.valid_until ? r.valid_until.toISOString() : null
		};
	});
	const byLine = new Map<string, { parts: number; passedW: number; testedW: number; alarms: number }>();
	for (const [i, t] of tiles.entries()) {
		const key = t.line ?? 'No line';
		const e = byLine.get(key) ?? { parts: 0, passedW: 0, testedW: 0, alarms: 0 };
		e.parts += t.partsLastHour;
		e.testedW += Number(rows[i]?.rolling_tested ?? 0);
		e.passedW += Number(rows[i]?.rolling_passed ?? 0);
		e.alarms += t.openAlarms;
		byLine.set(key, e);
	}
	return {
		at: new Date().toISOString(),
		tiles,
		lines: [...byLine].map(([line, e]) => ({ line, partsLastHour: e.parts, yieldPct: e.testedW ? (100 * e.passedW) / e.testedW : null, openAlarms: e.alarms }))
	};
}
