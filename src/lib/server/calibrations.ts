// Fixture calibrations: computed by the domain, kept as history per station.
import { QueryTypes } from 'sequelize';
import { calibrateFixture } from '$lib/measure';
import { audit } from './audit';
import { db } from './db';
import { getStation } from './stations';

export type CalibrationRecord = {
	id: number;
	inductanceH: number;
	strayF: number;
	residualPpm: number;
	at: string;
	validUntil: string;
	references: { capacitanceF: number; resonanceHz: number }[];
};

type Row = {
	id: string;
	inductance_h: number;
	stray_f: number;
	residual_ppm: number;
	at: Date;
	valid_until: Date;
	references_json: CalibrationRecord['references'];
};

const plain = (r: Row): CalibrationRecord => ({
	id: Number(r.id),
	inductanceH: r.inductance_h,
	strayF: r.stray_f,
	residualPpm: r.residual_ppm,
	at: r.at.toISOString(),
	validUntil: r.valid_until.toISOString(),
	references: r.references_json
});

/** The station's newest calibration, or null. */
export async function latestCalibration(stationId: number): Promise<CalibrationRecord | null> {
	const rows = await db().query<Row>('SELECT * FROM calibrations WHERE station_id = :stationId ORDER BY at DESC, id DESC LIMIT 1', {
		replacements: { stationId },
		type: QueryTypes.SELECT
	});
	return rows[0] ? plain(rows[0]) : null;
}

/** The calibration in force at `now` (the newest, if it has not expired), or null. */
export async function calibrationInForceAt(stationId: number, now: Date): Promise<CalibrationRecord | null> {
	const latest = await latestCalibration(stationId);
	return latest && new Date(latest.validUntil) > now ? latest : null;
}

export async function calibrationHistory(stationId: number, limit = 100): Promise<CalibrationRecord[]> {
	const rows = await db().query<Row>('SELECT * FROM calibrations WHERE station_id = :stationId ORDER BY at DESC, id DESC LIMIT :limit', {
		replacements: { stationId, limit },
		type: QueryTypes.SELECT
	});
	return rows.map(plain);
}

export type CalibrateOutcome =
	| { ok: true; calibration: CalibrationRecord }
	| { ok: false; status: 404 | 409; kind: string; detail: string; candidate?: { inductanceH: number; strayF: number; residualPpm: number } };

/**
 * Calibrates a station from reference readings against its own limits and its previous
 * calibration. A refused calibration stores nothing and leaves the previous one as it was.
 */
export async function calibrateStation(stationId: number, references: { capacitanceF: number; resonanceHz: number }[], now: Date): Promise<CalibrateOutcome> {
	const station = await getStation(stationId);
	if (!station) return { ok: false, status: 404, kind: 'not-found', detail: 'Station not found' };
	const previous = await latestCalibration(stationId);
	const policy = station.calibrationPolicy;
	const result = calibrateFixture({
		references,
		blockingF: station.fixture.blockingF,
		at: now.getTime(),
		validityHours: policy.validityHours,
		limits: { maxResidualPpm: policy.maxResidualPpm, maxInductanceChangePct: policy.maxInductanceChangePct, maxStrayChangeF: policy.maxStrayChangeF },
		previous: previous ? { inductanceH: previous.inductanceH, strayF: previous.strayF } : null
	});
	if (!result.ok) {
		const c = result.candidate;
		return {
			ok: false,
			status: 409,
			kind: 'calibration-refused',
			detail: result.error.message,
			...(c ? { candidate: { inductanceH: c.inductanceH, strayF: c.strayF, residualPpm: c.residualPpm } } : {})
		};
	}
	const cal = result.calibration;
	const rows = await db().transaction(async (t) => {
		const inserted = await db().query<Row>(
			`INSERT INTO calibrations (station_id, at, valid_until, inductance_h, stray_f, residual_ppm, blocking_f, references_json)
			 VALUES (:stationId, :at, :validUntil, :l, :stray, :residual, :blocking, :refs) RETURNING *`,
			{
				replacements: {
					stationId,
					at: new Date(cal.at),
					validUntil: new Date(cal.validUntil),
					l: cal.inductanceH,
					stray: cal.strayF,
					residual: cal.residualPpm,
					blocking: cal.blockingF,
					refs: JSON.stringify(references)
				},
				type: QueryTypes.SELECT,
				transaction: t
			}
		);
		await audit(
			{ userId: null, label: `station ${station.name}` },
			'calibration',
			stationId,
			'calibrate',
			previous ? { inductanceH: previous.inductanceH, strayF: previous.strayF, at: previous.at } : null,
			{ inductanceH: cal.inductanceH, strayF: cal.strayF, residualPpm: cal.residualPpm },
			t
		);
		return inserted;
	});
	const row = rows[0];
	if (!row) throw new Error('calibration insert returned no row');
	return { ok: true, calibration: plain(row) };
}
