// Read models for the set-up tables (lines, stations, products, lots), as plain objects.
import { QueryTypes } from 'sequelize';
import { db } from './db';

export type StationRow = {
	id: number;
	name: string;
	line: string | null;
	arrangement: 'single' | 'parallel2' | 'antiseries2';
	inductanceH: number;
	strayF: number;
	blockingF: number | null;
	active: boolean;
	lastSeenAt: string | null;
};

export async function listStations(): Promise<StationRow[]> {
	const rows = await db().query<{
		id: string;
		name: string;
		line: string | null;
		arrangement: StationRow['arrangement'];
		inductance_h: number;
		stray_f: number;
		blocking_f: number | null;
		active: boolean;
		last_seen_at: Date | null;
	}>(
		`SELECT s.id, s.name, l.name AS line, s.arrangement, s.inductance_h, s.stray_f, s.blocking_f, s.active, s.last_seen_at
		 FROM stations s LEFT JOIN lines l ON l.id = s.line_id ORDER BY l.name NULLS LAST, s.name`,
		{ type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({
		id: Number(r.id),
		name: r.name,
		line: r.line,
		arrangement: r.arrangement,
		inductanceH: r.inductance_h,
		strayF: r.stray_f,
		blockingF: r.blocking_f,
		active: r.active,
		lastSeenAt: r.last_seen_at ? r.last_seen_at.toISOString() : null
	}));
}

export type LotRow = {
	id: number;
	number: string;
	productCode: string;
	quantity: number;
	status: 'open' | 'closed';
	disposition: 'pending' | 'held' | 'released';
	openedAt: string;
};

export async function listLots(): Promise<LotRow[]> {
	const rows = await db().query<{
		id: string;
		number: string;
		code: string;
		quantity: number;
		status: LotRow['status'];
		disposition: LotRow['disposition'];
		opened_at: Date;
	}>(
		`SELECT l.id, l.number, p.code, l.quantity, l.status, l.disposition, l.opened_at
		 FROM lots l JOIN products p ON p.id = l.product_id ORDER BY l.status DESC, l.opened_at DESC, l.number`,
		{ type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({
		id: Number(r.id),
		number: r.number,
		productCode: r.code,
		quantity: r.quantity,
		status: r.status,
		disposition: r.disposition,
		openedAt: r.opened_at.toISOString()
	}));
}

export type ProductRow = { id: number; code: string; name: string; family: string; planVersion: number; points: number };

export async function listProducts(): Promise<ProductRow[]> {
	const rows = await db().query<{ id: string; code: string; name: string; family: string; version: number; points: number }>(
		`SELECT p.id, p.code, p.name, p.family, v.version, jsonb_array_length(v.plan -> 'points') AS points
		 FROM products p
		 JOIN LATERAL (SELECT version, plan FROM plan_versions WHERE product_id = p.id ORDER BY version DESC LIMIT 1) v ON true
		 ORDER BY p.code`,
		{ type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ id: Number(r.id), code: r.code, name: r.name, family: r.family, planVersion: r.version, points: r.points }));
}
