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
