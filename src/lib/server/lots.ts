// Lots: open, close, read their yield and bins, list their parts.
import { QueryTypes, UniqueConstraintError } from 'sequelize';
import { audit, type Actor } from './audit';
import { db } from './db';
import { getProductByCode } from './products';

export type LotRecord = {
	id: number;
	number: string;
	productId: number;
	productCode: string;
	quantity: number;
	status: 'open' | 'closed';
	disposition: 'pending' | 'held' | 'released';
	openedAt: string;
	closedAt: string | null;
	/** Why the lot was last held or released, when, and by whom (null while pending). */
	dispositionReason: string | null;
	dispositionAt: string | null;
	dispositionBy: string | null;
};

type Row = {
	id: string;
	number: string;
	product_id: string;
	code: string;
	quantity: number;
	status: LotRecord['status'];
	disposition: LotRecord['disposition'];
	opened_at: Date;
	closed_at: Date | null;
	disposition_reason: string | null;
	disposition_at: Date | null;
	disposition_by_name: string | null;
};

const plain = (r: Row): LotRecord => ({
	id: Number(r.id),
	number: r.number,
	productId: Number(r.product_id),
	productCode: r.code,
	quantity: r.quantity,
	status: r.status,
	disposition: r.disposition,
	openedAt: r.opened_at.toISOString(),
	closedAt: r.closed_at ? r.closed_at.toISOString() : null,
	dispositionReason: r.disposition_reason ?? null,
	dispositionAt: r.disposition_at ? r.disposition_at.toISOString() : null,
	dispositionBy: r.disposition_by_name ?? null
});

export async function getLot(number: string): Promise<LotRecord | null> {
	const rows = await db().query<Row>(`SELECT l.*, p.code, u.name AS disposition_by_name FROM lots l JOIN products p ON p.id = l.product_id
		 LEFT JOIN users u ON u.id = l.disposition_by WHERE l.number = :number`, {
		replacements: { number },
		type: QueryTypes.SELECT
	});
	return rows[0] ? plain(rows[0]) : null;
}

export type OpenLotResult = { ok: true; lot: LotRecord } | { ok: false; field: 'number' | 'productCode'; message: string };

export async function openLot(actor: Actor, input: { number: string; productCode: string; quantity: number }): Promise<OpenLotResult> {
	const product = await getProductByCode(input.productCode);
	if (!product) return { ok: false, field: 'productCode', message: 'No product with this code' };
	if (!product.active) return { ok: false, field: 'productCode', message: 'This product is retired' };
	try {
		await db().transaction(async (t) => {
			await db().query('INSERT INTO lots (number, product_id, quantity, opened_by) VALUES (:number, :pid, :quantity, :by)', {
				replacements: { number: input.number, pid: product.id, quantity: input.quantity, by: actor.userId },
				transaction: t
			});
			await audit(actor, 'lot', input.number, 'open', null, { product: product.code, quantity: input.quantity }, t);
		});
	} catch (e) {
		if (e instanceof UniqueConstraintError) return { ok: false, field: 'number', message: 'A lot with this number already exists' };
		throw e;
	}
	const lot = await getLot(input.number);
	if (!lot) throw new Error('lot vanished after its insert');
	return { ok: true, lot };
}

/** Closes or reopens a lot; a closed lot refuses new results (409). */
export async function setLotStatus(actor: Actor, number: string, status: 'open' | 'closed'): Promise<{ ok: true } | { ok: false; message: string }> {
	const rows = await db().query<{ id: string }>(
		`UPDATE lots SET status = :status, closed_at = CASE WHEN :status = 'closed' THEN now() ELSE NULL END
		 WHERE number = :number AND status <> :status RETURNING id`,
		{ replacements: { number, status }, type: QueryTypes.SELECT }
	);
	if (rows.length === 0) {
		const lot = await getLot(number);
		return lot ? { ok: false, message: `The lot is already ${status}` } : { ok: false, message: 'No such lot' };
	}
	await audit(actor, 'lot', number, status === 'closed' ? 'close' : 'reopen', null, { status });
	return { ok: true };
}

export type DispositionResult = { ok: true; lot: LotRecord } | { ok: false; status: 404 | 409; message: string };

/**
 * Holds or releases a lot with a reason (audited with the state before and after). A release needs
 * a closed lot (testing finished) and refuses a lot already released; a hold refuses a lot already
 * held. Holding does not stop testing: stations still post to an open held lot (only `closed`
 * refuses results), so parts can be retested while the lot waits for its decision.
 */
export async function setDisposition(actor: Actor, number: string, disposition: 'held' | 'released', reason: string): Promise<DispositionResult> {
	const outcome = await db().transaction(async (t): Promise<DispositionResult | null> => {
		const rows = await db().query<{ id: string; status: string; disposition: string; disposition_reason: string | null }>(
			'SELECT id, status, disposition, disposition_reason FROM lots WHERE number = :number FOR UPDATE',
			{ replacements: { number }, type: QueryTypes.SELECT, transaction: t }
		);
		const row = rows[0];
		if (!row) return { ok: false, status: 404, message: 'No such lot' };
		if (row.disposition === disposition) return { ok: false, status: 409, message: `The lot is already ${disposition}` };
		if (disposition === 'released' && row.status !== 'closed') {
			return { ok: false, status: 409, message: 'Close the lot before releasing it: parts may still be tested into it' };
		}
		await db().query(
			`UPDATE lots SET disposition = :disposition, disposition_reason = :reason, disposition_at = now(), disposition_by = :by WHERE id = :id`,
			{ replacements: { id: row.id, disposition, reason, by: actor.userId }, transaction: t }
		);
		await audit(
			actor,
			'lot',
			number,
			disposition === 'held' ? 'hold' : 'release',
			{ disposition: row.disposition, reason: row.disposition_reason },
			{ disposition, reason },
			t
		);
		return null;
	});
	if (outcome) return outcome;
	const lot = await getLot(number);
	if (!lot) throw new Error('lot vanished after its disposition');
	return { ok: true, lot };
}

export type LotSummary = { lot: LotRecord; tested: number; passed: number; yieldPct: number | null; bins: Record<string, number> };

/** Yield and bin counts of a lot's production parts (reference parts never count toward yield). */
export async function lotSummary(number: string): Promise<LotSummary | null> {
	const lot = await getLot(number);
	if (!lot) return null;
	// Counters kept by the ingest (lot_bin_counts), so a lot of a million parts reads a few rows.
	const rows = await db().query<{ bin: number; n: string }>(
		`SELECT bin, sum(n) AS n FROM lot_bin_counts WHERE lot_id = :id GROUP BY bin ORDER BY bin`,
		{ replacements: { id: lot.id }, type: QueryTypes.SELECT }
	);
	const bins: Record<string, number> = {};
	let tested = 0;
	let passed = 0;
	for (const r of rows) {
		const n = Number(r.n);
		bins[String(r.bin)] = n;
		tested += n;
		if (r.bin === 1) passed += n;
	}
	return { lot, tested, passed, yieldPct: tested ? (100 * passed) / tested : null, bins };
}

export type UnitRow = {
	serial: string;
	kind: string;
	station: string | null;
	testedAt: string;
	bin: number;
	pass: boolean;
	biasV: number[];
	capacitanceF: (number | null)[];
	q: (number | null)[] | null;
	leakageA: number | null;
	temperatureC: number | null;
	fit: { cj0F: number; vjV: number; m: number; cpF: number; rmsPct: number } | null;
	failures: unknown[];
};

type UnitDbRow = {
	serial: string;
	kind: string;
	station: string | null;
	tested_at: Date;
	bin: number;
	pass: boolean;
	bias_v: number[];
	capacitance_f: (number | null)[];
	q: (number | null)[] | null;
	leakage_a: number | null;
	temperature_c: number | null;
	cj0_f: number | null;
	vj_v: number | null;
	m: number | null;
	cp_f: number | null;
	fit_rms_pct: number | null;
	failures: unknown[];
};

/** A page of a lot's parts, newest first, optionally of one bin. */
export async function lotUnits(lotId: number, opts: { limit: number; offset: number; bin?: number }): Promise<{ total: number; units: UnitRow[] }> {
	const where = `u.lot_id = :lotId${opts.bin === undefined ? '' : ' AND u.bin = :bin'}`;
	// The same rows in an order only units_lot_idx (lot_id, id) or units_lot_bin_id_idx (lot_id, bin, id)
	// gives: a range instead of `=` keeps the column in the order, so the planner cannot walk the
	// primary key backwards through every newer part of other lots instead (half a second past a
	// million of them).
	const ordered =
		opts.bin === undefined
			? 'u.lot_id >= :lotId AND u.lot_id <= :lotId ORDER BY u.lot_id DESC, u.id DESC'
			: 'u.lot_id = :lotId AND u.bin >= :bin AND u.bin <= :bin ORDER BY u.bin DESC, u.id DESC';
	const replacements = { lotId, bin: opts.bin, limit: opts.limit, offset: opts.offset };
	const [count] = await db().query<{ n: string }>(`SELECT count(*) AS n FROM units u WHERE ${where}`, { replacements, type: QueryTypes.SELECT });
	const rows = await db().query<UnitDbRow>(
		`SELECT u.serial, u.kind, s.name AS station, u.tested_at, u.bin, u.pass, u.bias_v, u.capacitance_f, u.q, u.leakage_a, u.temperature_c,
		   u.cj0_f, u.vj_v, u.m, u.cp_f, u.fit_rms_pct, u.failures
		 FROM units u LEFT JOIN stations s ON s.id = u.station_id WHERE ${ordered} LIMIT :limit OFFSET :offset`,
		{ replacements, type: QueryTypes.SELECT }
	);
	return {
		total: Number(count?.n ?? 0),
		units: rows.map((r) => ({
			serial: r.serial,
			kind: r.kind,
			station: r.station,
			testedAt: r.tested_at.toISOString(),
			bin: r.bin,
			pass: r.pass,
			biasV: r.bias_v,
			capacitanceF: r.capacitance_f,
			q: r.q,
			leakageA: r.leakage_a,
			temperatureC: r.temperature_c,
			fit:
				r.cj0_f !== null && r.vj_v !== null && r.m !== null && r.cp_f !== null && r.fit_rms_pct !== null
					? { cj0F: r.cj0_f, vjV: r.vj_v, m: r.m, cpF: r.cp_f, rmsPct: r.fit_rms_pct }
					: null,
			failures: r.failures
		}))
	};
}
