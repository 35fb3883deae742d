// What a station sees of itself: fixture, calibration in force, and the plan of its current lot.
import { QueryTypes } from 'sequelize';
import { calibrationInForceAt, latestCalibration } from './calibrations';
import { db } from './db';
import { getProduct } from './products';
import { getStation } from './stations';

export async function stationView(stationId: number, now: Date) {
	const station = await getStation(stationId);
	if (!station) return null;
	const [inForce, latest] = await Promise.all([calibrationInForceAt(stationId, now), latestCalibration(stationId)]);
	let lot: { number: string; productCode: string; status: string } | null = null;
	let plan = null;
	if (station.currentLotId !== null) {
		const rows = await db().query<{ number: string; product_id: string; status: string }>('SELECT number, product_id, status FROM lots WHERE id = :id', {
			replacements: { id: station.currentLotId },
			type: QueryTypes.SELECT
		});
		const row = rows[0];
		if (row) {
			const product = await getProduct(Number(row.product_id));
			if (product) {
				lot = { number: row.number, productCode: product.code, status: row.status };
				plan = { productCode: product.code, version: product.plan.version, ...product.plan.plan };
			}
		}
	}
	return {
		station: { id: station.id, name: station.name, line: station.line, active: station.active },
		fixture: station.fixture,
		calibration: inForce ? { inductanceH: inForce.inductanceH, strayF: inForce.strayF, residualPpm: inForce.residualPpm, at: inForce.at, validUntil: inForce.validUntil } : null,
		lastCalibration: latest ? { at: latest.at, validUntil: latest.validUntil } : null,
		calibrationPolicy: station.calibrationPolicy,
		lot,
		plan
	};
}

export type StationTrends = {
	/** oldest first, at most TREND_CALIBRATIONS */
	calibrations: { id: number; at: string; inductanceH: number; strayF: number; residualPpm: number }[];
	/** the station's reference-part charts, newest TREND_POINTS points each */
	reference: {
		chartId: number;
		productCode: string;
		characteristic: string;
		unit: string;
		limits: { centerLine: number; upperControlLimit: number; lowerControlLimit: number; sigma: number } | null;
		points: { seq: number; value: number; at: string; serial: string; unitId: number; rules: string[] }[];
	}[];
	/** parts received per clock hour over the last 24 h, oldest first (24 entries) */
	throughput: { hour: string; parts: number }[];
};

export const TREND_CALIBRATIONS = 200;
export const TREND_POINTS = 200;

/**
 * The station page's trends. Each query reads a bounded slice through an index, so the cost does
 * not grow with the parts stored: calibrations (station_id, at), chart_points (chart_id, seq), and
 * for throughput the station's minute counts (station_minute_counts, migration 0013), summed by hour.
 */
export async function stationTrends(stationId: number, now: Date): Promise<StationTrends> {
	const [cals, charts, hours] = await Promise.all([
		db().query<{ id: string; at: Date; inductance_h: number; stray_f: number; residual_ppm: number }>(
			`SELECT * FROM (SELECT id, at, inductance_h, stray_f, residual_ppm FROM calibrations WHERE station_id = :stationId ORDER BY at DESC, id DESC LIMIT :n) x ORDER BY at, id`,
			{ replacements: { stationId, n: TREND_CALIBRATIONS }, type: QueryTypes.SELECT }
		),
		db().query<{ id: string; code: string; characteristic: string; unit: string; limits: { shewhart?: StationTrends['reference'][number]['limits'] } | null }>(
			`SELECT c.id, p.code, c.characteristic, c.unit, c.limits FROM charts c JOIN products p ON p.id = c.product_id
			 WHERE c.station_id = :stationId AND c.kind = 'reference' ORDER BY p.code, c.id`,
			{ replacements: { stationId }, type: QueryTypes.SELECT }
		),
		db().query<{ hour: Date; parts: string }>(
			`SELECT date_trunc('hour', minute, 'UTC') AS hour, sum(parts) AS parts FROM station_minute_counts
			 WHERE station_id = :stationId AND minute > :since GROUP BY 1 ORDER BY 1`,
			{ replacements: { stationId, since: new Date(now.getTime() - 24 * 3600e3) }, type: QueryTypes.SELECT }
		)
	]);
	const points = charts.length
		? await db().query<{ chart_id: string; seq: number; value: number; at: Date; serial: string; unit_id: string; rules: string[] }>(
				`SELECT x.chart_id, x.seq, x.value, x.at, u.serial, x.unit_id, x.rules FROM unnest(CAST(:ids AS bigint[])) AS c(id)
				 CROSS JOIN LATERAL (SELECT * FROM chart_points p WHERE p.chart_id = c.id ORDER BY p.seq DESC LIMIT :n) x
				 JOIN units u ON u.id = x.unit_id ORDER BY x.chart_id, x.seq`,
				{ replacements: { ids: `{${charts.map((c) => c.id).join(',')}}`, n: TREND_POINTS }, type: QueryTypes.SELECT }
			)
		: [];
	const byHour = new Map(hours.map((h) => [h.hour.getTime(), Number(h.parts)]));
	const top = Math.floor(now.getTime() / 3600e3) * 3600e3;
	return {
		calibrations: cals.map((c) => ({ id: Number(c.id), at: c.at.toISOString(), inductanceH: c.inductance_h, strayF: c.stray_f, residualPpm: c.residual_ppm })),
		reference: charts.map((c) => ({
			chartId: Number(c.id),
			productCode: c.code,
			characteristic: c.characteristic,
			unit: c.unit,
			limits: c.limits?.shewhart ?? null,
			points: points
				.filter((p) => p.chart_id === c.id)
				.map((p) => ({ seq: p.seq, value: p.value, at: p.at.toISOString(), serial: p.serial, unitId: Number(p.unit_id), rules: p.rules }))
		})),
		throughput: Array.from({ length: 24 }, (_, i) => {
			const t = top - (23 - i) * 3600e3;
			return { hour: new Date(t).toISOString(), parts: byHour.get(t) ?? 0 };
		})
	};
}
