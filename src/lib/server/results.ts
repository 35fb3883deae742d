// Station ingest: a batch of tested units judged and stored in one transaction, with
// idempotency keys so a retried post is answered from the stored answer and stored once.
import { createHash } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { evaluateUnit } from '$lib/measure';
import type { SpecFailure, SpecPlan } from '$lib/measure/types';
import type { ResultsBodyInput } from '$lib/schemas/station-api';
import type { StationPrincipal } from './auth';
import { calibrationInForceAt } from './calibrations';
import { db } from './db';
import { getLot } from './lots';
import { publish, type NewEvent } from './events';
import { queueAlarmMail } from './mail/notify';
import { chartBatch, type OpenedAlarm, type SpcUnit } from './spc';
import { getStation } from './stations';

export type UnitAnswer = {
	serial: string;
	bin: number;
	pass: boolean;
	capacitanceF: (number | null)[];
	q: (number | null)[] | null;
	fit: { cj0F: number; vjV: number; m: number; cpF: number; rmsPct: number } | null;
	failures: { test: string; value: number | null; low: number | null; high: number | null }[];
};

export type IngestOutcome =
	| { ok: true; status: 200 | 201; replayed: boolean; body: { results: UnitAnswer[] }; alarms: OpenedAlarm[]; timings?: { judgeMs: number; spcMs: number } }
	| { ok: false; status: 400 | 404 | 409; kind: string; detail: string; errors?: { path: string; message: string }[] };

/** The hash that decides "the same body": SHA-256 of the request's bytes as sent. */
export function requestHash(rawBody: string): string {
	return createHash('sha256').update(rawBody).digest('hex');
}

type StoredKey = { request_hash: string; status: number; response: { results: UnitAnswer[] } };

async function storedKey(stationId: number, key: string): Promise<StoredKey | null> {
	const rows = await db().query<StoredKey>('SELECT request_hash, status, response FROM idempotency_keys WHERE station_id = :stationId AND key = :key', {
		replacements: { stationId, key },
		type: QueryTypes.SELECT
	});
	return rows[0] ?? null;
}

function replayOf(stored: StoredKey, hash: string): IngestOutcome {
	if (stored.request_hash !== hash) {
		return { ok: false, status: 409, kind: 'idempotency-conflict', detail: 'This Idempotency-Key was used with another body' };
	}
	return { ok: true, status: 200, replayed: true, body: stored.response, alarms: [] };
}

type PlanRow = { id: string; version: number; plan: SpecPlan; created_at: Date };

/** The plan version in force at a time: the newest created at or before it (else the first). */
function planAt(versions: PlanRow[], at: Date): PlanRow | undefined {
	let chosen: PlanRow | undefined;
	for (const v of versions) if (v.created_at <= at && (!chosen || v.version > chosen.version)) chosen = v;
	return chosen ?? versions.reduce<PlanRow | undefined>((a, v) => (!a || v.version < a.version ? v : a), undefined);
}

const answerFailures = (fs: SpecFailure[]) => fs.map(({ test, value, low, high }) => ({ test, value, low, high }));

class KeyTaken extends Error {}
class LotClosed extends Error {}

/**
 * Judges and stores a batch for a station. Assumes the body passed ResultsBody. Refusals store
 * nothing; an accepted batch is committed before this returns.
 */
export async function ingestResults(
	principal: StationPrincipal,
	key: string,
	hash: string,
	body: ResultsBodyInput,
	now: Date,
	origin: string
): Promise<IngestOutcome> {
	const earlier = await storedKey(principal.id, key);
	if (earlier) return replayOf(earlier, hash);

	const station = await getStation(principal.id);
	if (!station) return { ok: false, status: 404, kind: 'not-found', detail: 'Station not found' };
	const calibration = await calibrationInForceAt(station.id, now);
	if (!calibration) {
		return { ok: false, status: 409, kind: 'calibration-required', detail: 'No calibration in force for this station: calibrate, then post again' };
	}
	const lot = await getLot(body.lot);
	if (!lot) return { ok: false, status: 404, kind: 'lot-not-found', detail: `No lot ${body.lot}`, errors: [{ path: 'lot', message: 'unknown lot' }] };
	if (lot.status !== 'open') {
		return { ok: false, status: 409, kind: 'lot-closed', detail: `Lot ${lot.number} is closed`, errors: [{ path: 'lot', message: 'lot is closed' }] };
	}
	const versions = await db().query<PlanRow>('SELECT id, version, plan, created_at FROM plan_versions WHERE product_id = :pid', {
		replacements: { pid: lot.productId },
		type: QueryTypes.SELECT
	});

	const judgeStart = performance.now();
	const answers: UnitAnswer[] = [];
	const records: Record<string, unknown>[] = [];
	const charted: Omit<SpcUnit, 'id'>[] = [];
	const errors: { path: string; message: string }[] = [];
	body.units.forEach((unit, i) => {
		const testedAt = new Date(unit.testedAt);
		const version = planAt(versions, testedAt);
		if (!version) {
			errors.push({ path: `units.${i}`, message: 'the lot’s product has no plan' });
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
		const failures = answerFailures(evaluated.failures);
		answers.push({ serial: unit.serial, bin: evaluated.bin, pass: evaluated.pass, capacitanceF: evaluated.capacitanceF, q: evaluated.q, fit: evaluated.fit, failures });
		charted.push({ kind: unit.kind, lotId: lot.id, testedAt: unit.testedAt, biasV: unit.points.map((p) => p.biasV), capacitanceF: evaluated.capacitanceF, plan: version.plan });
		records.push({
			lot_id: lot.id,
			station_id: station.id,
			plan_version_id: Number(version.id),
			calibration_id: calibration.id,
			serial: unit.serial,
			kind: unit.kind,
			tested_at: unit.testedAt,
			temperature_c: unit.temperatureC ?? null,
			leakage_a: unit.leakageA ?? null,
			bin: evaluated.bin,
			pass: evaluated.pass,
			bias_v: unit.points.map((p) => p.biasV),
			resonance_hz: unit.points.map((p) => p.resonanceHz),
			bandwidth_hz: unit.points.some((p) => p.bandwidthHz !== undefined) ? unit.points.map((p) => p.bandwidthHz ?? null) : null,
			capacitance_f: evaluated.capacitanceF,
			q: evaluated.q,
			cj0_f: evaluated.fit?.cj0F ?? null,
			vj_v: evaluated.fit?.vjV ?? null,
			m: evaluated.fit?.m ?? null,
			cp_f: evaluated.fit?.cpF ?? null,
			fit_rms_pct: evaluated.fit?.rmsPct ?? null,
			failures
		});
	});
	if (errors.length) return { ok: false, status: 400, kind: 'invalid-units', detail: 'Some units cannot be judged', errors };

	const judgeMs = performance.now() - judgeStart;
	const response = { results: answers };
	let alarms: OpenedAlarm[] = [];
	let spcMs = 0;
	try {
		await db().transaction(async (t) => {
			// Claim the key first: a concurrent post with the same key waits here until this
			// transaction ends, then finds the key taken and replays the stored answer.
			const claimed = await db().query(
				`INSERT INTO idempotency_keys (station_id, key, request_hash, status, response) VALUES (:sid, :key, :hash, 201, :response)
				 ON CONFLICT DO NOTHING RETURNING key`,
				{ replacements: { sid: station.id, key, hash, response: JSON.stringify(response) }, type: QueryTypes.SELECT, transaction: t }
			);
			if (claimed.length === 0) throw new KeyTaken();
			const open = await db().query("SELECT 1 FROM lots WHERE id = :id AND status = 'open' FOR SHARE", {
				replacements: { id: lot.id },
				type: QueryTypes.SELECT,
				transaction: t
			});
			if (open.length === 0) throw new LotClosed();
			// Ids drawn first, so each stored part is known to its chart points without relying
			// on the order of RETURNING rows.
			const ids = await db().query<{ id: string }>("SELECT nextval('units_id_seq') AS id FROM generate_series(1, :n)", {
				replacements: { n: records.length },
				type: QueryTypes.SELECT,
				transaction: t
			});
			records.forEach((r, i) => (r.id = Number(ids[i]?.id)));
			// One statement for the whole batch: the rows travel as one JSON parameter.
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
			const spcStart = performance.now();
			alarms = await chartBatch(
				t,
				station.id,
				lot.productId,
				charted.map((c, i) => ({ ...c, id: Number(records[i]?.id) }))
			);
			spcMs = performance.now() - spcStart;
			const counted = records.filter((r) => r.kind === 'production');
			if (counted.length) {
				const perBin = new Map<number, number>();
				for (const r of counted) perBin.set(Number(r.bin), (perBin.get(Number(r.bin)) ?? 0) + 1);
				await db().query(
					`INSERT INTO lot_bin_counts (lot_id, bin, n) SELECT :lotId, bin, n FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(bin smallint, n bigint)
					 ON CONFLICT (lot_id, bin) DO UPDATE SET n = lot_bin_counts.n + EXCLUDED.n`,
					{ replacements: { lotId: lot.id, rows: JSON.stringify([...perBin].map(([bin, n]) => ({ bin, n }))) }, transaction: t }
				);
			}
			await publish(t, await batchEvents(t, station.id, station.name, lot.id, lot.number, records, alarms));
			// Queued in this transaction: the mail exists exactly when the alarm does.
			for (const a of alarms) {
				await queueAlarmMail(
					{
						alarmId: a.alarmId,
						rule: a.rule,
						ruleDescription: a.description,
						chart: `${a.characteristic}${a.kind === 'reference' ? ' (reference part)' : ''}`,
						stationName: station.name,
						lineId: station.lineId,
						lineName: station.line,
						productId: lot.productId,
						productCode: lot.productCode,
						lotNumber: lot.number,
						suspect: a.suspect,
						reasoning: a.reasoning,
						openedAt: now.toISOString(),
						url: `${origin}/alarms?status=open&station=${encodeURIComponent(station.name)}`
					},
					{ transaction: t, now }
				);
			}
			await db().query('UPDATE stations SET last_seen_at = :now, current_lot_id = :lotId WHERE id = :id', {
				replacements: { now, lotId: lot.id, id: station.id },
				transaction: t
			});
		});
	} catch (e) {
		if (e instanceof KeyTaken) {
			const stored = await storedKey(station.id, key);
			if (stored) return replayOf(stored, hash);
		}
		if (e instanceof LotClosed) return { ok: false, status: 409, kind: 'lot-closed', detail: `Lot ${lot.number} is closed` };
		throw e;
	}
	return { ok: true, status: 201, replayed: false, body: response, alarms, timings: { judgeMs, spcMs } };
}


/** Parts a station's rolling yield looks back over (our choice: a few minutes of a busy station). */
export const ROLLING_YIELD_PARTS = 200;

/** The live events of an accepted batch: each part, the changed yield figures, new alarms. */
async function batchEvents(
	t: Transaction,
	stationId: number,
	stationName: string,
	lotId: number,
	lotNumber: string,
	records: Record<string, unknown>[],
	alarms: OpenedAlarm[]
): Promise<NewEvent[]> {
	const events: NewEvent[] = records.map((r) => ({
		type: 'unit',
		stationId,
		lotId,
		payload: { serial: r.serial, lot: lotNumber, station: stationName, bin: r.bin, pass: r.pass, testedAt: r.tested_at, kind: r.kind }
	}));
	if (records.some((r) => r.kind === 'production')) {
		const [lotRow] = await db().query<{ tested: string; passed: string }>(
			'SELECT coalesce(sum(n), 0) AS tested, coalesce(sum(n) FILTER (WHERE bin = 1), 0) AS passed FROM lot_bin_counts WHERE lot_id = :lotId',
			{ replacements: { lotId }, type: QueryTypes.SELECT, transaction: t }
		);
		const [stRow] = await db().query<{ tested: string; passed: string }>(
			`SELECT count(*) AS tested, count(*) FILTER (WHERE pass) AS passed FROM
			   (SELECT pass FROM units WHERE station_id = :stationId AND kind = 'production' ORDER BY id DESC LIMIT :n) x`,
			{ replacements: { stationId, n: ROLLING_YIELD_PARTS }, type: QueryTypes.SELECT, transaction: t }
		);
		const lotTested = Number(lotRow?.tested ?? 0);
		const lotPassed = Number(lotRow?.passed ?? 0);
		const window = Number(stRow?.tested ?? 0);
		events.push({
			type: 'yield',
			stationId,
			lotId,
			payload: {
				station: stationName,
				lot: lotNumber,
				lotTested,
				lotPassed,
				lotYieldPct: lotTested ? (100 * lotPassed) / lotTested : null,
				stationYieldPct: window ? (100 * Number(stRow?.passed ?? 0)) / window : null,
				stationWindow: window
			}
		});
	}
	for (const a of alarms) {
		events.push({
			type: 'alarm',
			stationId,
			lotId,
			payload: { id: a.alarmId, rule: a.rule, chart: a.characteristic, kind: a.kind, station: stationName, lot: lotNumber, status: 'open', suspect: a.suspect, description: a.description }
		});
	}
	return events;
}

/** Forgets idempotency keys older than the retention (stations retry within minutes, not days). */
export async function pruneIdempotencyKeys(olderThanHours = 72): Promise<void> {
	await db().query('DELETE FROM idempotency_keys WHERE created_at < now() - make_interval(hours => :h)', { replacements: { h: olderThanHours } });
}
