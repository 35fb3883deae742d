// Station ingest: a batch of tested units judged and stored in one transaction, with
// idempotency keys so a retried post is answered from the stored answer and stored once.
import { createHash } from 'node:crypto';
import { evaluateUnit } from '$lib/measure';
import type { Arrangement, SpecFailure, SpecPlan } from '$lib/measure/types';
import type { ResultsBodyInput } from '$lib/schemas/station-api';
import type { StationPrincipal } from './auth';
import { db } from './db';
import { run, statement } from './db/prepared';
import { announce, publish, type NewEvent } from './events';
import { queueAlarmMail } from './mail/notify';
import { ALARM_EXTENSION_CTE, alarmExtensions, chartsOfSql, chartWork, chartWriteCtes, createCharts, hasCharts, openBatchAlarms, stepCharts, type ChartRow, type OpenedAlarm, type SpcUnit } from './spc';
import { ingestStudyBatch } from './studies';

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
	| { ok: true; status: 200 | 201; replayed: boolean; body: { results: UnitAnswer[] }; alarms: OpenedAlarm[]; timings?: IngestTimings }
	| { ok: false; status: 400 | 404 | 409; kind: string; detail: string; errors?: { path: string; message: string }[] };

/**
 * Where a post's time went, in ms: the context read, judging, rule stepping, the write statement
 * (with its commit when it runs alone), and, when alarms open, the rest of their transaction.
 */
export type IngestTimings = { contextMs: number; judgeMs: number; spcMs: number; writeMs: number; commitMs: number; violations: number; tries?: number };

/** The hash that decides "the same body": SHA-256 of the request's bytes as sent. */
export function requestHash(rawBody: string): string {
	return createHash('sha256').update(rawBody).digest('hex');
}

type StoredKey = { request_hash: string; status: number; response: { results: UnitAnswer[] } };

function replayOf(stored: StoredKey, hash: string): IngestOutcome {
	if (stored.request_hash !== hash) {
		return { ok: false, status: 409, kind: 'idempotency-conflict', detail: 'This Idempotency-Key was used with another body' };
	}
	return { ok: true, status: 200, replayed: true, body: stored.response, alarms: [] };
}

type PlanRow = { id: number; version: number; plan: SpecPlan; created_at: string };

/** The plan version in force at a time: the newest created at or before it (else the first). */
function planAt(versions: PlanRow[], at: Date): PlanRow | undefined {
	let chosen: PlanRow | undefined;
	for (const v of versions) if (new Date(v.created_at) <= at && (!chosen || v.version > chosen.version)) chosen = v;
	return chosen ?? versions.reduce<PlanRow | undefined>((a, v) => (!a || v.version < a.version ? v : a), undefined);
}

const answerFailures = (fs: SpecFailure[]) => fs.map(({ test, value, low, high }) => ({ test, value, low, high }));

/** Everything a post needs to know before judging, read in one statement. */
type IngestContext = {
	stored: StoredKey | null;
	station: {
		id: number;
		name: string;
		line_id: number | null;
		line: string | null;
		inductance_h: number;
		stray_f: number;
		blocking_f: number | null;
		arrangement: Arrangement;
	} | null;
	calibration: { id: number; inductance_h: number; stray_f: number; valid_until: string } | null;
	lot: { id: number; number: string; product_id: number; code: string; status: string; plans: PlanRow[] | null } | null;
	/** Ids drawn for the batch's parts (a sequence: gaps when a post is refused are harmless). */
	ids: string[];
	/** The station's charts of the lot's product, as they were when read (no lock). */
	charts: ChartRow[] | null;
	/** The open alarms of those charts: a violation of one of them only extends it. */
	open_alarms: { chart_id: string; rule: string }[] | null;
};

const CONTEXT = statement(
	'ingest-context',
	`SELECT
	   (SELECT json_build_object('request_hash', k.request_hash, 'status', k.status, 'response', k.response)
	      FROM idempotency_keys k WHERE k.station_id = $1 AND k.key = $2) AS stored,
	   (SELECT json_build_object('id', s.id, 'name', s.name, 'line_id', s.line_id, 'line', ln.name, 'inductance_h', s.inductance_h,
	           'stray_f', s.stray_f, 'blocking_f', s.blocking_f, 'arrangement', s.arrangement)
	      FROM stations s LEFT JOIN lines ln ON ln.id = s.line_id WHERE s.id = $1) AS station,
	   (SELECT json_build_object('id', c.id, 'inductance_h', c.inductance_h, 'stray_f', c.stray_f, 'valid_until', c.valid_until)
	      FROM calibrations c WHERE c.station_id = $1 ORDER BY c.at DESC, c.id DESC LIMIT 1) AS calibration,
	   (SELECT json_build_object('id', l.id, 'number', l.number, 'product_id', l.product_id, 'code', p.code, 'status', l.status,
	           'plans', (SELECT json_agg(json_build_object('id', v.id, 'version', v.version, 'plan', v.plan, 'created_at', v.created_at))
	                     FROM plan_versions v WHERE v.product_id = l.product_id))
	      FROM lots l JOIN products p ON p.id = l.product_id WHERE l.number = $3) AS lot,
	   ARRAY(SELECT nextval('units_id_seq') FROM generate_series(1, $4)) AS ids,
	   (SELECT json_agg(c) FROM (${chartsOfSql('$1', '(SELECT l.product_id FROM lots l WHERE l.number = $3)')}) c) AS charts,
	   (SELECT json_agg(json_build_object('chart_id', a.chart_id, 'rule', a.rule)) FROM alarms a JOIN charts c ON c.id = a.chart_id
	      WHERE c.station_id = $1 AND c.product_id = (SELECT l.product_id FROM lots l WHERE l.number = $3) AND a.status <> 'closed') AS open_alarms`
);

async function ingestContext(stationId: number, key: string, lotNumber: string, parts: number): Promise<IngestContext> {
	const [row] = await run<IngestContext>(CONTEXT, [stationId, key, lotNumber, parts]);
	if (!row) throw new Error('the context statement returned no row');
	return row;
}

/** A judged part as a `units` row, in the shape the ingest's INSERT reads (jsonb_to_recordset). */
export function unitRow(
	at: { lotId: number | undefined; stationId: number; planVersionId: number; calibrationId: number; kind: string },
	unit: ResultsBodyInput['units'][number],
	evaluated: { bin: number; pass: boolean; capacitanceF: (number | null)[]; q: (number | null)[] | null; fit: UnitAnswer['fit'] },
	failures: UnitAnswer['failures']
): Record<string, unknown> {
	return {
		lot_id: at.lotId,
		station_id: at.stationId,
		plan_version_id: at.planVersionId,
		calibration_id: at.calibrationId,
		serial: unit.serial,
		kind: at.kind,
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
	};
}

/**
 * Writes the batch in one statement: claims the idempotency key, checks the lot is open (and
 * holds it open until commit), writes the parts, chart points, limits and chart state, the
 * station's bin counters, the station, and (with no alarm to open) the events (announced after
 * the commit, see announce()), and extends the open alarms its violations belong to; returns the
 * lot's and the station's yield figures after the batch. The guard
 * (migration 0012) undoes it all when the key was taken meanwhile (a concurrent post with the
 * same key waits at the claim until the other ends), the lot closed, or a chart moved (or an
 * alarm it meant to extend was closed).
 */
const WRITE_BATCH = statement(
	'ingest-write',
	`WITH claim AS (
	   INSERT INTO idempotency_keys (station_id, key, request_hash, status, response) VALUES ($8, $15, $16, 201, CAST($17 AS jsonb))
	   ON CONFLICT DO NOTHING RETURNING 1),
	 lot_open AS (SELECT 1 FROM lots WHERE id = $5 AND status = 'open' FOR SHARE),
	 u AS (
	   INSERT INTO units (id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
	     bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures)
	   SELECT id, lot_id, station_id, plan_version_id, calibration_id, serial, kind, tested_at, temperature_c, leakage_a,
	     bin, pass, bias_v, resonance_hz, bandwidth_hz, capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures
	   FROM jsonb_to_recordset(CAST($1 AS jsonb)) AS x(id bigint, lot_id bigint, station_id bigint, plan_version_id bigint, calibration_id bigint,
	     serial text, kind text, tested_at timestamptz, temperature_c float8, leakage_a float8, bin smallint, pass boolean,
	     bias_v float8[], resonance_hz float8[], bandwidth_hz float8[], capacitance_f float8[], q float8[],
	     cj0_f float8, vj_v float8, m float8, cp_f float8, fit_rms_pct float8, failures jsonb)),
	 ${chartWriteCtes({ points: '$2', charts: '$3', limits: '$4' }).join(',\n')},
	 bins AS (
	   INSERT INTO lot_bin_counts (lot_id, bin, shard, n) SELECT $5, bin, $8, n FROM jsonb_to_recordset(CAST($6 AS jsonb)) AS x(bin smallint, n bigint)
	   ON CONFLICT (lot_id, bin, shard) DO UPDATE SET n = lot_bin_counts.n + EXCLUDED.n RETURNING bin, n),
	 st AS (UPDATE stations SET last_seen_at = $7, current_lot_id = $5 WHERE id = $8),
	 -- The lot's counters after this batch: this station's upserted rows as returned, every
	 -- other row (other stations' shards, this station's other bins) as read.
	 lot_now AS (
	   SELECT bin, n FROM bins
	   UNION ALL SELECT b.bin, b.n FROM lot_bin_counts b
	     WHERE b.lot_id = $5 AND NOT (b.shard = $8 AND EXISTS (SELECT 1 FROM bins WHERE bins.bin = b.bin))),
	 -- The station's rolling window: this batch's production parts, then the stored ones.
	 recent AS (
	   SELECT pass FROM (
	     SELECT id, pass FROM (SELECT id, pass FROM units WHERE station_id = $8 AND kind = 'production' ORDER BY id DESC LIMIT $9) o
	     UNION ALL SELECT id, pass FROM jsonb_to_recordset(CAST($20 AS jsonb)) AS n(id bigint, pass boolean)
	   ) w ORDER BY id DESC LIMIT $9),
	 figures AS (
	   SELECT (SELECT coalesce(sum(n), 0) FROM lot_now) AS lot_tested, (SELECT coalesce(sum(n) FILTER (WHERE bin = 1), 0) FROM lot_now) AS lot_passed,
	     (SELECT count(*) FROM recent) AS window_n, (SELECT count(*) FILTER (WHERE pass) FROM recent) AS window_passed),
	 -- The transaction's id before the events draw theirs (the live hub's gap rule, live.ts, needs
	 -- every event's transaction to be older than the event): referenced from the events' filter,
	 -- so it runs before their first id is drawn, whatever order the other CTEs run in.
	 xid AS (SELECT txid_current() AS x),
	 ev AS (
	   INSERT INTO events (type, station_id, lot_id, payload)
	   SELECT type, station_id, lot_id, payload FROM jsonb_to_recordset(CAST($10 AS jsonb)) AS x(type text, station_id bigint, lot_id bigint, payload jsonb)
	   WHERE CAST($11 AS boolean) AND EXISTS (SELECT 1 FROM xid)
	   UNION ALL
	   SELECT 'yield', $8, $5, jsonb_build_object('station', CAST($12 AS text), 'lot', CAST($13 AS text), 'lotTested', f.lot_tested, 'lotPassed', f.lot_passed,
	     'lotYieldPct', CASE WHEN f.lot_tested > 0 THEN CAST(100.0 * f.lot_passed / f.lot_tested AS float8) END,
	     'stationYieldPct', CASE WHEN f.window_n > 0 THEN CAST(100.0 * f.window_passed / f.window_n AS float8) END, 'stationWindow', f.window_n)
	   FROM figures f WHERE CAST($11 AS boolean) AND CAST($14 AS boolean) AND EXISTS (SELECT 1 FROM xid)
	   RETURNING id),
	 ${ALARM_EXTENSION_CTE('$19')}
	 SELECT ingest_guard((SELECT count(*) FROM claim), (SELECT count(*) FROM lot_open), (SELECT count(*) FROM chs) + (SELECT count(*) FROM ext), $18) AS guarded, f.*,
	   (SELECT count(*) FROM ev) AS events FROM figures f`
);

/** SQLSTATEs the write's guard raises (migration 0012). */
const KEY_TAKEN = 'BLKEY';
const LOT_CLOSED = 'BLLOT';
const CHARTS_MOVED = 'BLCHT';
/** PostgreSQL's deadlock_detected and serialization_failure: the post is tried again. */
const TRY_AGAIN = new Set([CHARTS_MOVED, '40P01', '40001']);
/** Unique keys a post's chart write can meet when another post wrote the same charts first. */
const CHART_KEYS = new Set(['chart_points_pkey', 'chart_limits_pkey']);
/**
 * Tries of one post before it is answered "try again". Every chart conflict means another post
 * of the station was stored, so a station would need this many posts in flight at once to see it.
 */
const MAX_TRIES = 20;

const sqlState = (e: unknown): string | undefined => {
	const code = e && typeof e === 'object' && 'code' in e ? e.code : undefined;
	return typeof code === 'string' ? code : undefined;
};

/** Parts a station's rolling yield looks back over (our choice: a few minutes of a busy station). */
export const ROLLING_YIELD_PARTS = 200;

/**
 * Judges and stores a batch for a station. Assumes the body passed ResultsBody. Refusals store
 * nothing; an accepted batch is committed before this returns.
 *
 * The common path costs two statements: one read before judging (stored key, station,
 * calibration, lot and plans, the parts' ids, the charts' state), then, with the rules stepped in
 * memory, one statement that claims the key and writes everything (committed on its own, one WAL
 * flush). A batch that opens alarms writes the same statement in a transaction with the alarms,
 * their events and mail. When a chart moved between the read and the write (another post of the
 * same station), the write undoes itself and the post is judged again from a fresh read.
 */
export async function ingestResults(
	principal: StationPrincipal,
	key: string,
	hash: string,
	body: ResultsBodyInput,
	now: Date,
	origin: string
): Promise<IngestOutcome> {
	// A measurement-system study's batch: its own checks and storage (kind 'study', no charts, no yield).
	if (body.study !== undefined) return ingestStudyBatch(principal, key, hash, body, now);
	const post: Post = { principal, key, hash, body, now, origin };
	for (let attempt = 1; ; attempt++) {
		const outcome = await ingestOnce(post);
		if (outcome !== 'again') return outcome.ok && outcome.timings ? { ...outcome, timings: { ...outcome.timings, tries: attempt } } : outcome;
		if (attempt >= MAX_TRIES) {
			return { ok: false, status: 409, kind: 'concurrent-post', detail: 'Other posts of this station kept changing its charts; post again' };
		}
		// A little jitter, so posts that met do not meet again at once.
		await new Promise((r) => setTimeout(r, Math.random() * 2 * attempt));
	}
}

type Post = { principal: StationPrincipal; key: string; hash: string; body: ResultsBodyInput; now: Date; origin: string };

/** One try of a post; 'again' when its write found the charts moved (or a deadlock) and undid itself. */
async function ingestOnce({ principal, key, hash, body, now, origin }: Post): Promise<IngestOutcome | 'again'> {
	const t0 = performance.now();
	const ctx = await ingestContext(principal.id, key, body.lot, body.units.length);
	const contextMs = performance.now() - t0;
	if (ctx.stored) return replayOf(ctx.stored, hash);
	const station = ctx.station;
	if (!station) return { ok: false, status: 404, kind: 'not-found', detail: 'Station not found' };
	const calibration = ctx.calibration && new Date(ctx.calibration.valid_until) > now ? ctx.calibration : null;
	if (!calibration) {
		return { ok: false, status: 409, kind: 'calibration-required', detail: 'No calibration in force for this station: calibrate, then post again' };
	}
	const lot = ctx.lot;
	if (!lot) return { ok: false, status: 404, kind: 'lot-not-found', detail: `No lot ${body.lot}`, errors: [{ path: 'lot', message: 'unknown lot' }] };
	if (lot.status !== 'open') {
		return { ok: false, status: 409, kind: 'lot-closed', detail: `Lot ${lot.number} is closed`, errors: [{ path: 'lot', message: 'lot is closed' }] };
	}
	const versions = lot.plans ?? [];

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
			arrangement: station.arrangement,
			blockingF: station.blocking_f,
			calibration: { inductanceH: calibration.inductance_h, strayF: calibration.stray_f },
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
		records.push(unitRow({ lotId: lot.id, stationId: station.id, planVersionId: version.id, calibrationId: calibration.id, kind: unit.kind }, unit, evaluated, failures));
	});
	if (errors.length) return { ok: false, status: 400, kind: 'invalid-units', detail: 'Some units cannot be judged', errors };

	const judgeMs = performance.now() - judgeStart;
	const response = { results: answers };
	// The chart work refers to these objects; their ids are filled in once drawn.
	const spcUnits: SpcUnit[] = charted.map((c) => ({ ...c, id: 0 }));
	const work = chartWork(spcUnits);
	const production = records.filter((r) => r.kind === 'production');
	let alarms: OpenedAlarm[] = [];
	ctx.ids.forEach((id, i) => {
		const r = records[i];
		if (r) r.id = Number(id);
	});
	spcUnits.forEach((u, i) => (u.id = Number(records[i]?.id)));
	const spcStart = performance.now();
	let rows = ctx.charts ?? [];
	if (!hasCharts(rows, work)) rows = await createCharts(station.id, lot.product_id, work);
	const writes = await stepCharts(rows, work);
	const spcMs = performance.now() - spcStart;

	const perBin = new Map<number, number>();
	for (const r of production) perBin.set(Number(r.bin), (perBin.get(Number(r.bin)) ?? 0) + 1);
	const unitEvents = records.map((r) => ({
		type: 'unit',
		station_id: station.id,
		lot_id: lot.id,
		payload: { serial: r.serial, lot: lot.number, station: station.name, bin: r.bin, pass: r.pass, testedAt: r.tested_at, kind: r.kind }
	}));
	// With no alarm to open (no violation, or only ones of alarms already open, which the write
	// extends), the events go out in the same statement as the parts and nothing else runs.
	const violations = writes.pending.length;
	const open = new Set((ctx.open_alarms ?? []).map((a) => `${a.chart_id}|${a.rule}`));
	const eventsHere = writes.pending.every((p) => open.has(`${p.chart.id}|${p.violation.ruleId}`));
	const extensions = eventsHere ? alarmExtensions(writes.pending) : [];
	const values = [
		JSON.stringify(records),
		JSON.stringify(writes.points),
		JSON.stringify(writes.charts),
		JSON.stringify(writes.limits),
		lot.id,
		JSON.stringify([...perBin].map(([bin, n]) => ({ bin, n }))),
		now,
		station.id,
		ROLLING_YIELD_PARTS,
		JSON.stringify(unitEvents),
		eventsHere,
		station.name,
		lot.number,
		production.length > 0,
		key,
		hash,
		JSON.stringify(response),
		writes.charts.length + extensions.length,
		JSON.stringify(extensions),
		// The batch's production parts for the rolling window (a small copy: the planner would
		// parse the whole batch again for two fields).
		JSON.stringify(production.map((r) => ({ id: r.id, pass: r.pass })))
	];
	type Figures = { lot_tested: string; lot_passed: string; window_n: string; window_passed: string };
	const writeStart = performance.now();
	let writeMs = 0;
	let commitMs = 0;
	try {
		if (eventsHere) {
			await run<Figures>(WRITE_BATCH, values);
			writeMs = performance.now() - writeStart;
			announce();
		} else {
			await db().transaction(async (t) => {
				const [written] = await run<Figures>(WRITE_BATCH, values, t);
				writeMs = performance.now() - writeStart;
				alarms = await openBatchAlarms(t, station.id, writes);
				const events: NewEvent[] = unitEvents.map((e) => ({ type: 'unit', stationId: station.id, lotId: lot.id, payload: e.payload }));
				if (production.length && written) events.push(yieldEvent(station.name, lot.number, station.id, lot.id, written));
				for (const a of alarms) {
					events.push({
						type: 'alarm',
						stationId: station.id,
						lotId: lot.id,
						payload: { id: a.alarmId, rule: a.rule, chart: a.characteristic, kind: a.kind, station: station.name, lot: lot.number, status: 'open', suspect: a.suspect, description: a.description }
					});
				}
				await publish(t, events);
				// Queued in this transaction: the mail exists exactly when the alarm does.
				for (const a of alarms) {
					await queueAlarmMail(
						{
							alarmId: a.alarmId,
							rule: a.rule,
							ruleDescription: a.description,
							chart: `${a.characteristic}${a.kind === 'reference' ? ' (reference part)' : ''}`,
							stationName: station.name,
							lineId: station.line_id === null ? null : Number(station.line_id),
							lineName: station.line,
							productId: lot.product_id,
							productCode: lot.code,
							lotNumber: lot.number,
							suspect: a.suspect,
							reasoning: a.reasoning,
							openedAt: now.toISOString(),
							url: `${origin}/alarms?status=open&station=${encodeURIComponent(station.name)}`
						},
						{ transaction: t, now }
					);
				}
			});
			commitMs = performance.now() - writeStart - writeMs;
		}
	} catch (e) {
		const state = sqlState(e);
		if (state === KEY_TAKEN) {
			// Another post with this key was stored meanwhile: answer as it was answered.
			const again = await ingestContext(principal.id, key, body.lot, 0);
			return again.stored ? replayOf(again.stored, hash) : 'again';
		}
		if (state === LOT_CLOSED) return { ok: false, status: 409, kind: 'lot-closed', detail: `Lot ${lot.number} is closed` };
		if (state !== undefined && TRY_AGAIN.has(state)) return 'again';
		// Two posts of one station that read the same chart state both number their next points
		// alike: the later one meets the earlier one's points (or limits) and is tried again.
		if (state === '23505' && CHART_KEYS.has(String((e as { constraint?: unknown }).constraint))) return 'again';
		throw e;
	}
	return { ok: true, status: 201, replayed: false, body: response, alarms, timings: { contextMs, judgeMs, spcMs, writeMs, commitMs, violations } };
}

/** The yield event of a batch from the figures its write statement returned. */
function yieldEvent(
	stationName: string,
	lotNumber: string,
	stationId: number,
	lotId: number,
	f: { lot_tested: string; lot_passed: string; window_n: string; window_passed: string }
): NewEvent {
	const lotTested = Number(f.lot_tested);
	const lotPassed = Number(f.lot_passed);
	const window = Number(f.window_n);
	return {
		type: 'yield',
		stationId,
		lotId,
		payload: {
			station: stationName,
			lot: lotNumber,
			lotTested,
			lotPassed,
			lotYieldPct: lotTested ? (100 * lotPassed) / lotTested : null,
			stationYieldPct: window ? (100 * Number(f.window_passed)) / window : null,
			stationWindow: window
		}
	};
}

/** Forgets idempotency keys older than the retention (stations retry within minutes, not days). */
export async function pruneIdempotencyKeys(olderThanHours = 72): Promise<void> {
	await db().query('DELETE FROM idempotency_keys WHERE created_at < now() - make_interval(hours => :h)', { replacements: { h: olderThanHours } });
}
