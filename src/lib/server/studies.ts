// Measurement-system studies: create (engineer), start, finish (audited); the cell a station
// measures next; study batches posted through POST /api/v1/results with `study`, judged like any
// part and stored as units of kind 'study' with their cell; progress and the analysis from $lib/msa.
// Study units never count toward yield (only kind 'production' does) and never reach a chart.
import { QueryTypes, type Transaction } from 'sequelize';
import { evaluateUnit } from '$lib/measure';
import type { SpecPlan } from '$lib/measure/types';
import type { MsaRow } from '$lib/msa';
import type { ResultsBodyInput } from '$lib/schemas/station-api';
import type { StudyBodyInput } from '$lib/schemas/studies';
import { audit, type Actor } from './audit';
import type { StationPrincipal } from './auth';
import { calibrationInForceAt } from './calibrations';
import { db } from './db';
import { getProduct, getProductByCode } from './products';
import { unitRow, type IngestOutcome, type UnitAnswer } from './results';
import { getStation } from './stations';
import {
	analyseCharacteristic,
	nextCell,
	progressGrid,
	studyCharacteristics,
	worstOverall,
	type CharacteristicAnalysis,
	type Progress
} from './study-analysis';

export type StudyStatus = 'draft' | 'running' | 'finished';

export type StudySummary = {
	id: number;
	name: string;
	productCode: string;
	status: StudyStatus;
	trials: number;
	multiplier: number;
	parts: number;
	stations: string[];
	filled: number;
	total: number;
	createdBy: string | null;
	createdAt: string;
	startedAt: string | null;
	finishedAt: string | null;
};

export type StudyDetail = StudySummary & {
	productId: number;
	partList: { serial: string; lot: string }[];
	progress: Progress;
	/** Present once every cell is filled. */
	analysis: { characteristics: CharacteristicAnalysis[]; overall: string | null; planVersion: number } | null;
};

type SummaryRow = {
	id: string;
	name: string;
	code: string;
	product_id: string;
	status: StudyStatus;
	trials: number;
	multiplier: number;
	created_by: string | null;
	created_at: Date;
	started_at: Date | null;
	finished_at: Date | null;
	parts: string;
	stations: string[] | null;
	filled: string;
};

const SUMMARY_SELECT = `SELECT st.id, st.name, p.code, st.product_id, st.status, st.trials, st.multiplier, u.email AS created_by,
	   st.created_at, st.started_at, st.finished_at,
	   (SELECT count(*) FROM study_parts sp WHERE sp.study_id = st.id) AS parts,
	   (SELECT array_agg(s.name ORDER BY ss.position) FROM study_stations ss JOIN stations s ON s.id = ss.station_id WHERE ss.study_id = st.id) AS stations,
	   (SELECT count(*) FROM study_measurements m WHERE m.study_id = st.id) AS filled
	 FROM studies st JOIN products p ON p.id = st.product_id LEFT JOIN users u ON u.id = st.created_by`;

function summary(r: SummaryRow): StudySummary {
	const stations = r.stations ?? [];
	const parts = Number(r.parts);
	return {
		id: Number(r.id),
		name: r.name,
		productCode: r.code,
		status: r.status,
		trials: r.trials,
		multiplier: r.multiplier,
		parts,
		stations,
		filled: Number(r.filled),
		total: parts * stations.length * r.trials,
		createdBy: r.created_by,
		createdAt: r.created_at.toISOString(),
		startedAt: r.started_at?.toISOString() ?? null,
		finishedAt: r.finished_at?.toISOString() ?? null
	};
}

/** Studies, newest first. */
export async function listStudies(limit = 200): Promise<StudySummary[]> {
	const rows = await db().query<SummaryRow>(`${SUMMARY_SELECT} ORDER BY st.created_at DESC, st.id DESC LIMIT :limit`, { replacements: { limit }, type: QueryTypes.SELECT });
	return rows.map(summary);
}

async function studySummary(id: number, t?: Transaction): Promise<(StudySummary & { productId: number }) | null> {
	const rows = await db().query<SummaryRow>(`${SUMMARY_SELECT} WHERE st.id = :id`, { replacements: { id }, type: QueryTypes.SELECT, transaction: t });
	const r = rows[0];
	return r ? { ...summary(r), productId: Number(r.product_id) } : null;
}

async function studyParts(id: number): Promise<{ serial: string; lot: string; lotId: number }[]> {
	const rows = await db().query<{ serial: string; number: string; lot_id: string }>(
		'SELECT sp.serial, l.number, sp.lot_id FROM study_parts sp JOIN lots l ON l.id = sp.lot_id WHERE sp.study_id = :id ORDER BY sp.position',
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ serial: r.serial, lot: r.number, lotId: Number(r.lot_id) }));
}

type MeasurementRow = { serial: string; station: string; trial: number; bias_v: number[]; capacitance_f: (number | null)[]; tested_at: Date; bin: number };

async function studyMeasurements(id: number): Promise<MeasurementRow[]> {
	return db().query<MeasurementRow>(
		`SELECT m.serial, s.name AS station, m.trial, u.bias_v, u.capacitance_f, u.tested_at, u.bin
		 FROM study_measurements m JOIN units u ON u.id = m.unit_id JOIN stations s ON s.id = m.station_id WHERE m.study_id = :id`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
}

/** Rows of one characteristic in study order (parts, then stations, then trials). */
export function rowsOf(
	measurements: readonly { serial: string; station: string; trial: number; bias_v: number[]; capacitance_f: (number | null)[] }[],
	serials: readonly string[],
	stations: readonly string[],
	value: (b: readonly number[], c: readonly (number | null)[]) => number | null
): MsaRow[] {
	const partIx = new Map(serials.map((s, i) => [s, i]));
	const stationIx = new Map(stations.map((s, i) => [s, i]));
	return [...measurements]
		.sort((a, b) => (partIx.get(a.serial) ?? 0) - (partIx.get(b.serial) ?? 0) || (stationIx.get(a.station) ?? 0) - (stationIx.get(b.station) ?? 0) || a.trial - b.trial)
		.map((m) => ({ part: m.serial, appraiser: m.station, trial: m.trial, value: value(m.bias_v, m.capacitance_f) ?? Number.NaN }));
}

/** A study with its progress and, once complete, the analysis of every characteristic. */
export async function getStudy(id: number): Promise<StudyDetail | null> {
	const head = await studySummary(id);
	if (!head) return null;
	const [parts, measurements, product] = await Promise.all([studyParts(id), studyMeasurements(id), getProduct(head.productId)]);
	const serials = parts.map((p) => p.serial);
	const progress = progressGrid(serials, head.stations, head.trials, measurements);
	let analysis: StudyDetail['analysis'] = null;
	if (product && progress.total > 0 && progress.filled === progress.total) {
		const characteristics = studyCharacteristics(product.plan.plan).map((c) =>
			analyseCharacteristic(c, rowsOf(measurements, serials, head.stations, c.value), head.multiplier)
		);
		const overall = worstOverall(characteristics.map((c) => c.verdict?.overall ?? 'indeterminate'));
		analysis = { characteristics, overall, planVersion: product.plan.version };
	}
	return { ...head, partList: parts.map(({ serial, lot }) => ({ serial, lot })), progress, analysis };
}

export type CreateStudyResult = { ok: true; study: StudySummary } | { ok: false; field: string; message: string };

/** Creates a draft study. Assumes input that passed StudyBody; checks the names against the database. */
export async function createStudy(actor: Actor, input: StudyBodyInput): Promise<CreateStudyResult> {
	const product = await getProductByCode(input.productCode);
	if (!product) return { ok: false, field: 'productCode', message: `No product ${input.productCode}` };
	const lotNumbers = [...new Set(input.parts.map((p) => p.lot))];
	const lots = await db().query<{ id: string; number: string; product_id: string }>('SELECT id, number, product_id FROM lots WHERE number IN (:lotNumbers)', {
		replacements: { lotNumbers },
		type: QueryTypes.SELECT
	});
	const lotByNumber = new Map(lots.map((l) => [l.number, l]));
	for (const [i, p] of input.parts.entries()) {
		const lot = lotByNumber.get(p.lot);
		if (!lot) return { ok: false, field: `parts.${i}.lot`, message: `No lot ${p.lot}` };
		if (Number(lot.product_id) !== product.id) return { ok: false, field: `parts.${i}.lot`, message: `Lot ${p.lot} is not a lot of ${product.code}` };
	}
	const stations = await db().query<{ id: string; name: string; active: boolean }>('SELECT id, name, active FROM stations WHERE name IN (:names)', {
		replacements: { names: input.stations },
		type: QueryTypes.SELECT
	});
	const stationByName = new Map(stations.map((s) => [s.name, s]));
	for (const [i, name] of input.stations.entries()) {
		const s = stationByName.get(name);
		if (!s) return { ok: false, field: `stations.${i}`, message: `No station ${name}` };
		if (!s.active) return { ok: false, field: `stations.${i}`, message: `Station ${name} is not active` };
	}
	const id = await db().transaction(async (t) => {
		const [row] = await db().query<{ id: string }>(
			'INSERT INTO studies (product_id, name, trials, multiplier, created_by) VALUES (:productId, :name, :trials, :multiplier, :by) RETURNING id',
			{ replacements: { productId: product.id, name: input.name, trials: input.trials, multiplier: input.multiplier, by: actor.userId }, type: QueryTypes.SELECT, transaction: t }
		);
		const studyId = Number(row?.id);
		await db().query(
			`INSERT INTO study_parts (study_id, position, serial, lot_id) SELECT :studyId, x.position, x.serial, x.lot_id
			 FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(position integer, serial text, lot_id bigint)`,
			{ replacements: { studyId, rows: JSON.stringify(input.parts.map((p, i) => ({ position: i, serial: p.serial, lot_id: Number(lotByNumber.get(p.lot)?.id) }))) }, transaction: t }
		);
		await db().query(
			`INSERT INTO study_stations (study_id, position, station_id) SELECT :studyId, x.position, x.station_id
			 FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(position integer, station_id bigint)`,
			{ replacements: { studyId, rows: JSON.stringify(input.stations.map((n, i) => ({ position: i, station_id: Number(stationByName.get(n)?.id) }))) }, transaction: t }
		);
		await audit(actor, 'study', studyId, 'create', null, { name: input.name, productCode: product.code, parts: input.parts, stations: input.stations, trials: input.trials, multiplier: input.multiplier }, t);
		return studyId;
	});
	const study = await studySummary(id);
	if (!study) throw new Error('study vanished after insert');
	return { ok: true, study };
}

export type StatusResult = { ok: true; study: StudySummary } | { ok: false; status: 404 | 409; message: string };

/** Starts a draft study or finishes a complete running one (audited). */
export async function setStudyStatus(actor: Actor, id: number, status: 'running' | 'finished', now = new Date()): Promise<StatusResult> {
	const outcome = await db().transaction(async (t): Promise<StatusResult> => {
		const locked = await db().query<{ status: StudyStatus }>('SELECT status FROM studies WHERE id = :id FOR UPDATE', { replacements: { id }, type: QueryTypes.SELECT, transaction: t });
		const current = locked[0]?.status;
		if (!current) return { ok: false, status: 404, message: `No study ${id}` };
		const before = await studySummary(id, t);
		if (!before) return { ok: false, status: 404, message: `No study ${id}` };
		if (status === 'running') {
			if (current !== 'draft') return { ok: false, status: 409, message: `The study is ${current}; only a draft can be started` };
			// A station takes part in one running study at a time, so it always knows what to measure.
			const busy = await db().query<{ name: string; study: string }>(
				`SELECT s.name, o.name AS study FROM study_stations mine JOIN study_stations theirs ON theirs.station_id = mine.station_id AND theirs.study_id <> mine.study_id
				 JOIN studies o ON o.id = theirs.study_id AND o.status = 'running' JOIN stations s ON s.id = mine.station_id WHERE mine.study_id = :id`,
				{ replacements: { id }, type: QueryTypes.SELECT, transaction: t }
			);
			const first = busy[0];
			if (first) return { ok: false, status: 409, message: `Station ${first.name} is measuring the running study “${first.study}”; finish that study first` };
			await db().query("UPDATE studies SET status = 'running', started_at = :now WHERE id = :id", { replacements: { id, now }, transaction: t });
		} else {
			if (current !== 'running') return { ok: false, status: 409, message: `The study is ${current}; only a running study can be finished` };
			if (before.filled < before.total) return { ok: false, status: 409, message: `${before.total - before.filled} of ${before.total} cells are still empty; the analysis needs every cell` };
			await db().query("UPDATE studies SET status = 'finished', finished_at = :now WHERE id = :id", { replacements: { id, now }, transaction: t });
		}
		await audit(actor, 'study', id, status === 'running' ? 'start' : 'finish', { status: current }, { status, filled: before.filled, total: before.total }, t);
		const after = await studySummary(id, t);
		return after ? { ok: true, study: after } : { ok: false, status: 404, message: `No study ${id}` };
	});
	return outcome;
}

export type StationStudy = {
	id: number;
	name: string;
	productCode: string;
	/** The part to measure next and the lot to post it under; null when this station's row is complete. */
	next: { serial: string; lot: string; trial: number } | null;
	/** The biases to measure (the product's plan). */
	biasV: number[];
	filled: number;
	total: number;
};

/** The running study this station takes part in, with the part it should measure next. */
export async function studyForStation(stationId: number): Promise<StationStudy | null> {
	const rows = await db().query<{ id: string }>(
		"SELECT st.id FROM studies st JOIN study_stations ss ON ss.study_id = st.id WHERE ss.station_id = :stationId AND st.status = 'running' ORDER BY st.started_at LIMIT 1",
		{ replacements: { stationId }, type: QueryTypes.SELECT }
	);
	const id = Number(rows[0]?.id ?? 0);
	if (!id) return null;
	const [head, parts, done] = await Promise.all([
		studySummary(id),
		studyParts(id),
		db().query<{ serial: string; n: string }>('SELECT serial, count(*) AS n FROM study_measurements WHERE study_id = :id AND station_id = :stationId GROUP BY serial', {
			replacements: { id, stationId },
			type: QueryTypes.SELECT
		})
	]);
	if (!head) return null;
	const product = await getProduct(head.productId);
	const cell = nextCell(
		parts.map((p) => p.serial),
		head.trials,
		new Map(done.map((d) => [d.serial, Number(d.n)]))
	);
	const lot = cell ? parts.find((p) => p.serial === cell.serial)?.lot : undefined;
	return {
		id,
		name: head.name,
		productCode: head.productCode,
		next: cell && lot ? { serial: cell.serial, lot, trial: cell.trial } : null,
		biasV: product ? product.plan.plan.points.map((p) => p.biasV) : [],
		filled: head.filled,
		total: head.total
	};
}

// ---- study batches from POST /api/v1/results ---------------------------------------------

type StoredKey = { request_hash: string; status: number; response: { results: UnitAnswer[] } };

async function storedKey(stationId: number, key: string): Promise<StoredKey | null> {
	const rows = await db().query<StoredKey>('SELECT request_hash, status, response FROM idempotency_keys WHERE station_id = :stationId AND key = :key', {
		replacements: { stationId, key },
		type: QueryTypes.SELECT
	});
	return rows[0] ?? null;
}

function replayOf(stored: StoredKey, hash: string): IngestOutcome {
	if (stored.request_hash !== hash) return { ok: false, status: 409, kind: 'idempotency-conflict', detail: 'This Idempotency-Key was used with another body' };
	return { ok: true, status: 200, replayed: true, body: stored.response, alarms: [] };
}

type PlanRow = { id: string; version: number; plan: SpecPlan; created_at: Date };

function planAt(versions: PlanRow[], at: Date): PlanRow | undefined {
	let chosen: PlanRow | undefined;
	for (const v of versions) if (v.created_at <= at && (!chosen || v.version > chosen.version)) chosen = v;
	return chosen ?? versions.reduce<PlanRow | undefined>((a, v) => (!a || v.version < a.version ? v : a), undefined);
}

class KeyTaken extends Error {}
class Refused extends Error {
	constructor(readonly outcome: IngestOutcome) {
		super('refused');
	}
}

/**
 * Judges and stores a study batch (a ResultsBody with `study`): the study must be running, the
 * station one of its stations, every serial one of its parts (posted under that part's lot) with
 * a trial still to measure. Stored as units of kind 'study' with their cells; no chart, no yield,
 * no lot-open check (a study may re-measure parts of a closed lot). Idempotent like every post.
 */
export async function ingestStudyBatch(principal: StationPrincipal, key: string, hash: string, body: ResultsBodyInput, now: Date): Promise<IngestOutcome> {
	const studyId = body.study;
	if (studyId === undefined) throw new Error('ingestStudyBatch needs a study batch');
	const earlier = await storedKey(principal.id, key);
	if (earlier) return replayOf(earlier, hash);
	const station = await getStation(principal.id);
	if (!station) return { ok: false, status: 404, kind: 'not-found', detail: 'Station not found' };
	const calibration = await calibrationInForceAt(station.id, now);
	if (!calibration) return { ok: false, status: 409, kind: 'calibration-required', detail: 'No calibration in force for this station: calibrate, then post again' };
	const head = await studySummary(studyId);
	if (!head) return { ok: false, status: 404, kind: 'study-not-found', detail: `No study ${studyId}`, errors: [{ path: 'study', message: 'unknown study' }] };
	if (head.status !== 'running') return { ok: false, status: 409, kind: 'study-not-running', detail: `Study ${studyId} is ${head.status}, not running: nothing was stored`, errors: [{ path: 'study', message: `study is ${head.status}` }] };
	if (!head.stations.includes(station.name)) {
		return { ok: false, status: 409, kind: 'station-not-in-study', detail: `Station ${station.name} is not one of the stations of study ${studyId}`, errors: [{ path: 'study', message: 'station not in the study' }] };
	}
	const parts = await studyParts(studyId);
	const partBySerial = new Map(parts.map((p) => [p.serial, p]));
	const errors: { path: string; message: string }[] = [];
	body.units.forEach((u, i) => {
		const part = partBySerial.get(u.serial);
		if (!part) errors.push({ path: `units.${i}.serial`, message: `${u.serial} is not a part of study ${studyId}` });
		else if (part.lot !== body.lot) errors.push({ path: 'lot', message: `${u.serial} comes from lot ${part.lot}, not ${body.lot}` });
	});
	if (errors.length) return { ok: false, status: 400, kind: 'invalid-units', detail: 'Some units are not parts of this study; nothing was stored', errors };

	const versions = await db().query<PlanRow>('SELECT id, version, plan, created_at FROM plan_versions WHERE product_id = :pid', {
		replacements: { pid: head.productId },
		type: QueryTypes.SELECT
	});
	const answers: UnitAnswer[] = [];
	const records: Record<string, unknown>[] = [];
	body.units.forEach((unit, i) => {
		const version = planAt(versions, new Date(unit.testedAt));
		if (!version) {
			errors.push({ path: `units.${i}`, message: 'the study’s product has no plan' });
			return;
		}
		const evaluated = evaluateUnit({
			arrangement: station.fixture.arrangement,
			blockingF: station.fixture.blockingF,
			calibration: { inductanceH: calibration.inductanceH, strayF: calibration.strayF },
			plan: version.plan,
			unit: { points: unit.points, leakageA: unit.leakageA, temperatureC: unit.temperatureC }
		});
		if (!evaluated.ok) {
			errors.push({ path: `units.${i}`, message: evaluated.error.message });
			return;
		}
		const failures = evaluated.failures.map(({ test, value, low, high }) => ({ test, value, low, high }));
		answers.push({ serial: unit.serial, bin: evaluated.bin, pass: evaluated.pass, capacitanceF: evaluated.capacitanceF, q: evaluated.q, fit: evaluated.fit, failures });
		records.push(unitRow({ lotId: partBySerial.get(unit.serial)?.lotId, stationId: station.id, planVersionId: Number(version.id), calibrationId: calibration.id, kind: 'study' }, unit, evaluated, failures));
	});
	if (errors.length) return { ok: false, status: 400, kind: 'invalid-units', detail: 'Some units cannot be judged; nothing was stored', errors };

	let response: { results: (UnitAnswer & { study: { id: number; trial: number } })[] } = { results: [] };
	try {
		await db().transaction(async (t) => {
			// The study row serialises posts into one study, so two stations never take the same trial.
			const locked = await db().query<{ status: StudyStatus }>('SELECT status FROM studies WHERE id = :id FOR UPDATE', { replacements: { id: studyId }, type: QueryTypes.SELECT, transaction: t });
			if (locked[0]?.status !== 'running') {
				throw new Refused({ ok: false, status: 409, kind: 'study-not-running', detail: `Study ${studyId} is no longer running: nothing was stored` });
			}
			const done = await db().query<{ serial: string; n: string }>('SELECT serial, count(*) AS n FROM study_measurements WHERE study_id = :id AND station_id = :sid GROUP BY serial', {
				replacements: { id: studyId, sid: station.id },
				type: QueryTypes.SELECT,
				transaction: t
			});
			const count = new Map(done.map((d) => [d.serial, Number(d.n)]));
			const trials: number[] = [];
			const full: { path: string; message: string }[] = [];
			records.forEach((r, i) => {
				const serial = String(r.serial);
				const trial = (count.get(serial) ?? 0) + 1;
				count.set(serial, trial);
				trials.push(trial);
				if (trial > head.trials) full.push({ path: `units.${i}.serial`, message: `${serial} already has all ${head.trials} trials from ${station.name}` });
			});
			if (full.length) throw new Refused({ ok: false, status: 409, kind: 'study-cell-complete', detail: 'This station has measured these parts all the trials the study asks for; nothing was stored', errors: full });
			response = { results: answers.map((a, i) => ({ ...a, study: { id: studyId, trial: trials[i] ?? 0 } })) };
			// Claimed after the trials are known, so a replay answers with the same trials.
			const claimed = await db().query(
				`INSERT INTO idempotency_keys (station_id, key, request_hash, status, response) VALUES (:sid, :key, :hash, 201, :response)
				 ON CONFLICT DO NOTHING RETURNING key`,
				{ replacements: { sid: station.id, key, hash, response: JSON.stringify(response) }, type: QueryTypes.SELECT, transaction: t }
			);
			if (claimed.length === 0) throw new KeyTaken();
			const ids = await db().query<{ id: string }>("SELECT nextval('units_id_seq') AS id FROM generate_series(1, :n)", {
				replacements: { n: records.length },
				type: QueryTypes.SELECT,
				transaction: t
			});
			records.forEach((r, i) => (r.id = Number(ids[i]?.id)));
			await db().query(
				`INSERT INTO units (id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
				   bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures)
				 SELECT id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
				   bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures
				 FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(id bigint, lot_id bigint, station_id bigint, plan_version_id bigint, calibration_id bigint,
				   serial text, kind text, tested_at timestamptz, temperature_c float8, leakage_a float8, bin smallint, pass boolean,
				   bias_v float8[], resonance_hz float8[], bandwidth_hz float8[], capacitance_f float8[], q float8[],
				   cj0_f float8, vj_v float8, m float8, cp_f float8, fit_rms_pct float8, failures jsonb)`,
				{ replacements: { rows: JSON.stringify(records) }, transaction: t }
			);
			await db().query(
				`INSERT INTO study_measurements (unit_id, study_id, serial, station_id, trial)
				 SELECT x.unit_id, :studyId, x.serial, :sid, x.trial FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(unit_id bigint, serial text, trial integer)`,
				{ replacements: { studyId, sid: station.id, rows: JSON.stringify(records.map((r, i) => ({ unit_id: r.id, serial: r.serial, trial: trials[i] }))) }, transaction: t }
			);
			await db().query('UPDATE stations SET last_seen_at = :now WHERE id = :id', { replacements: { now, id: station.id }, transaction: t });
		});
	} catch (e) {
		if (e instanceof Refused) return e.outcome;
		if (e instanceof KeyTaken) {
			const stored = await storedKey(station.id, key);
			if (stored) return replayOf(stored, hash);
		}
		throw e;
	}
	return { ok: true, status: 201, replayed: false, body: response, alarms: [] };
}
