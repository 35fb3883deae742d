// Control charts on every accepted part, inside the station's post: the chart rows are locked,
// the new points appended, the rules stepped with each chart's bounded state, and alarms opened
// (one open alarm per chart and rule). The work per part is bounded by the rule windows.
import { QueryTypes, type Transaction } from 'sequelize';
import { biasLabel } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import { computeBaseline, initialRuleState, step, type ChartRuleLimits, type RuleId, type RuleState, type Violation } from '$lib/spc';
import { ALL_RULE_IDS, DEFAULT_RULE_IDS } from '$lib/spc/types';
import { db } from './db';
import { run, statement } from './db/prepared';

/** Rules on when a plan names none (see DEFAULT_RULE_IDS); a plan can name others in `spc.rules`. */
export const DEFAULT_RULES: readonly RuleId[] = DEFAULT_RULE_IDS;
/** Reference parts are measured rarely; our choice: their charts freeze after 10 points. */
export const DEFAULT_REFERENCE_BASELINE = 10;
const DEFAULT_BASELINE = 30;

export type ChartKind = 'production' | 'reference';

export type Characteristic = { name: string; unit: 'pF' | ''; value: (u: SpcUnit) => number | null };

export type SpcUnit = {
	id: number;
	kind: string;
	lotId: number;
	testedAt: string;
	biasV: number[];
	capacitanceF: (number | null)[];
	plan: SpecPlan;
};

function capAt(u: SpcUnit, biasV: number): number | null {
	const i = u.biasV.findIndex((b) => Math.abs(b - biasV) <= 1e-6);
	const c = i < 0 ? null : (u.capacitanceF[i] ?? null);
	return c !== null && Number.isFinite(c) ? c : null;
}

/** The charted characteristics of a plan: C at every plan bias (in pF), and the ratio. */
export function characteristicsOf(plan: SpecPlan): Characteristic[] {
	const out: Characteristic[] = plan.points.map((p) => ({
		name: `C@${biasLabel(p.biasV)}V`,
		unit: 'pF' as const,
		value: (u: SpcUnit) => {
			const c = capAt(u, p.biasV);
			return c === null ? null : c * 1e12;
		}
	}));
	const r = plan.ratio;
	if (r) {
		out.push({
			name: `ratio C${biasLabel(r.lowBiasV)}/C${biasLabel(r.highBiasV)}`,
			unit: '',
			value: (u) => {
				const lo = capAt(u, r.lowBiasV);
				const hi = capAt(u, r.highBiasV);
				return lo !== null && hi !== null && hi > 0 ? lo / hi : null;
			}
		});
	}
	return out;
}

/** The plan's EWMA and CUSUM parameters for a baseline (the domain's documented defaults when unset). */
export function chartParameters(plan: SpecPlan) {
	const s = plan.spc;
	return { ewmaLambda: s?.ewmaLambda, ewmaLimitWidthSigma: s?.ewmaLimitWidthSigma, cusumReferenceK: s?.cusumReferenceK, cusumDecisionH: s?.cusumDecisionH };
}

function rulesOf(plan: SpecPlan): RuleId[] {
	const wanted = plan.spc?.rules;
	if (!wanted) return [...DEFAULT_RULES];
	return ALL_RULE_IDS.filter((r) => wanted.includes(r));
}

function baselineOf(plan: SpecPlan, kind: ChartKind): number {
	const spc = plan.spc;
	return kind === 'reference' ? (spc?.referenceBaselineParts ?? DEFAULT_REFERENCE_BASELINE) : (spc?.baselineParts ?? DEFAULT_BASELINE);
}

export type ChartRow = {
	id: string;
	kind: ChartKind;
	characteristic: string;
	status: 'baseline' | 'active';
	point_count: number;
	limits: ChartRuleLimits | null;
	limits_version: number;
	rule_state: RuleState | null;
	/** Set when the chart is written: the point count and limits version it was read with. */
	was_count?: number;
	was_version?: number;
};

export type OpenedAlarm = {
	alarmId: number;
	chartId: number;
	kind: ChartKind;
	characteristic: string;
	rule: RuleId;
	description: string;
	suspect: 'tester' | 'product' | 'lot';
	reasoning: string;
	lotId: number;
	unitId: number;
};

type Pending = { violation: Violation; chart: ChartRow; unit: SpcUnit; seq: number };

/** The charts one batch touches and its values per chart, in the batch's order. */
export type ChartWork = {
	specs: { kind: ChartKind; characteristic: string; unit: string }[];
	items: Map<string, { unit: SpcUnit; value: number }[]>;
};

/** What a batch adds to its charts, ready for one write with the batch's parts. */
export type ChartWrites = {
	points: Record<string, unknown>[];
	charts: ChartRow[];
	limits: Record<string, unknown>[];
	pending: Pending[];
};

/** Sorts a batch's charted values by chart (production and reference parts only). */
export function chartWork(units: SpcUnit[]): ChartWork {
	const items = new Map<string, { unit: SpcUnit; value: number }[]>();
	const specs: ChartWork['specs'] = [];
	for (const u of units) {
		if (u.kind !== 'production' && u.kind !== 'reference') continue;
		for (const c of characteristicsOf(u.plan)) {
			const value = c.value(u);
			if (value === null) continue;
			const key = `${u.kind}|${c.name}`;
			let list = items.get(key);
			if (!list) {
				list = [];
				items.set(key, list);
				specs.push({ kind: u.kind, characteristic: c.name, unit: c.unit });
			}
			list.push({ unit: u, value });
		}
	}
	return { specs, items };
}

/**
 * The select of a station's charts of a product (both kinds), for the post's context read:
 * parameters given as SQL expressions. No lock: the write statement checks each chart still
 * holds what was read (see chartWriteCtes).
 */
export function chartsOfSql(station: string, product: string): string {
	return `SELECT c.id, c.kind, c.characteristic, c.status, c.point_count, c.limits, c.limits_version, c.rule_state
	 FROM charts c WHERE c.station_id = ${station} AND c.product_id = ${product} ORDER BY c.id`;
}

const CHARTS_OF = statement('charts-of', chartsOfSql('$1', '$2'));

/** Creates the charts a batch needs that do not exist yet (a chart's first parts only); returns all of the station's charts of the product. */
export async function createCharts(stationId: number, productId: number, work: ChartWork): Promise<ChartRow[]> {
	await db().query(
		`INSERT INTO charts (station_id, product_id, kind, characteristic, unit)
		 SELECT $1, $2, kind, characteristic, unit FROM jsonb_to_recordset(CAST($3 AS jsonb)) AS x(kind text, characteristic text, unit text)
		 ON CONFLICT DO NOTHING`,
		{ bind: [stationId, productId, JSON.stringify(work.specs)] }
	);
	return run<ChartRow>(CHARTS_OF, [stationId, productId]);
}

/** True when every chart the batch needs is among `rows`. */
export function hasCharts(rows: ChartRow[], work: ChartWork): boolean {
	return work.specs.every((s) => rows.some((r) => r.kind === s.kind && r.characteristic === s.characteristic));
}

/**
 * Steps every locked chart's rules over the batch's values (the rule engine's bounded state, so
 * the work is set by the rule windows, not the history) and freezes baselines that fill up.
 */
export async function stepCharts(rows: ChartRow[], work: ChartWork): Promise<ChartWrites> {
	const out: ChartWrites = { points: [], charts: [], limits: [], pending: [] };
	for (const chart of rows) {
		const list = work.items.get(`${chart.kind}|${chart.characteristic}`);
		if (!list) continue;
		// What the write checks the chart still holds (see chartWriteCtes).
		out.charts.push(Object.assign(chart, { was_count: chart.point_count, was_version: chart.limits_version }));
		for (const { unit, value } of list) {
			const seq = chart.point_count;
			let fired: Violation[] = [];
			if (chart.status === 'active' && chart.limits && chart.rule_state) {
				const r = step(chart.rule_state, chart.limits, value, rulesOf(unit.plan));
				if (r.ok) {
					chart.rule_state = r.value.state;
					fired = r.value.violations;
				}
			}
			out.points.push({ chart_id: chart.id, seq, unit_id: unit.id, value, at: unit.testedAt, limits_version: chart.limits_version, rules: fired.map((v) => v.ruleId) });
			for (const violation of fired) out.pending.push({ violation, chart, unit, seq });
			chart.point_count++;
			if (chart.status === 'baseline' && chart.point_count >= baselineOf(unit.plan, chart.kind)) {
				await freezeBaseline(chart, unit.plan, baselineOf(unit.plan, chart.kind), out.points, out.limits);
			}
		}
	}
	return out;
}

/**
 * The parts of the batch's one write statement that store chart points, limits and the charts'
 * new state (CTEs named pts, lim, chs). Parameters: $P points, $C charts, $L limits as JSON.
 * A chart is written only where it still has the point count and limits version it had when
 * read (was_count, was_version); chs returns the charts written, and the statement's guard
 * undoes everything when one is missing (another post, or new limits, came in between).
 */
export function chartWriteCtes(p: { points: string; charts: string; limits: string }): string[] {
	return [
		`pts AS (INSERT INTO chart_points (chart_id, seq, unit_id, value, at, limits_version, rules)
		   SELECT chart_id, seq, unit_id, value, at, limits_version, rules FROM jsonb_to_recordset(CAST(${p.points} AS jsonb))
		     AS x(chart_id bigint, seq integer, unit_id bigint, value float8, at timestamptz, limits_version integer, rules text[]))`,
		`lim AS (INSERT INTO chart_limits (chart_id, version, limits, from_seq, to_seq, reason)
		   SELECT chart_id, version, limits, from_seq, to_seq, reason FROM jsonb_to_recordset(CAST(${p.limits} AS jsonb))
		     AS x(chart_id bigint, version integer, limits jsonb, from_seq integer, to_seq integer, reason text))`,
		`chs AS (UPDATE charts c SET status = x.status, point_count = x.point_count, limits = x.limits, limits_version = x.limits_version, rule_state = x.rule_state
		   FROM jsonb_to_recordset(CAST(${p.charts} AS jsonb))
		     AS x(id bigint, status text, point_count integer, limits jsonb, limits_version integer, rule_state jsonb, was_count integer, was_version integer)
		   WHERE c.id = x.id AND c.id = ANY (ARRAY(SELECT CAST(e->>'id' AS bigint) FROM jsonb_array_elements(CAST(${p.charts} AS jsonb)) e))
		     AND c.point_count = x.was_count AND c.limits_version = x.was_version
		   RETURNING c.id)`
	];
}

/** A batch's violations of alarms already open, one row per alarm: its newest point and how many violations. */
export function alarmExtensions(pending: Pending[]): { chart_id: string; rule: string; seq: number; n: number }[] {
	const byAlarm = new Map<string, { chart_id: string; rule: string; seq: number; n: number }>();
	for (const { chart, violation, seq } of pending) {
		const k = `${chart.id}|${violation.ruleId}`;
		const e = byAlarm.get(k);
		if (e) {
			e.seq = Math.max(e.seq, seq);
			e.n++;
		} else byAlarm.set(k, { chart_id: chart.id, rule: violation.ruleId, seq, n: 1 });
	}
	return [...byAlarm.values()];
}

/**
 * The write statement's CTE `ext` that extends open alarms as openAlarms would (newest point,
 * one more occurrence per violation), from alarmExtensions as JSON in parameter `p`; returns a
 * row per alarm extended.
 */
export const ALARM_EXTENSION_CTE = (p: string) => `ext AS (
	   UPDATE alarms a SET last_seq = GREATEST(a.last_seq, x.seq), occurrences = a.occurrences + x.n, last_at = now()
	   FROM jsonb_to_recordset(CAST(${p} AS jsonb)) AS x(chart_id bigint, rule text, seq integer, n integer)
	   WHERE a.chart_id = x.chart_id AND a.rule = x.rule AND a.status <> 'closed'
	   RETURNING a.id)`;

/** Opens (or extends) the alarms of a batch's violations; returns the ones it opened. */
export function openBatchAlarms(t: Transaction, stationId: number, writes: ChartWrites): Promise<OpenedAlarm[]> {
	return writes.pending.length ? openAlarms(t, stationId, writes.pending) : Promise.resolve([]);
}

/** Freezes a chart's limits from its first `n` points (stored ones plus this batch's). */
async function freezeBaseline(chart: ChartRow, plan: SpecPlan, n: number, batchPoints: Record<string, unknown>[], limitRows: Record<string, unknown>[]) {
	// A chart's first points never change once stored, so they are read outside the post's write.
	const stored = await db().query<{ value: number }>('SELECT value FROM chart_points WHERE chart_id = :id ORDER BY seq LIMIT :n', {
		replacements: { id: chart.id, n },
		type: QueryTypes.SELECT
	});
	const fresh = batchPoints.filter((p) => p.chart_id === chart.id).map((p) => Number(p.value));
	const values = [...stored.map((s) => s.value), ...fresh].slice(0, n);
	const baseline = computeBaseline(values, { baselineParts: n, ...chartParameters(plan) });
	// A baseline without spread (sigma 0) cannot set limits; the chart keeps collecting.
	if (!baseline.ok) return;
	chart.status = 'active';
	chart.limits = baseline.value.limits;
	chart.limits_version = 1;
	chart.rule_state = initialRuleState();
	limitRows.push({ chart_id: chart.id, version: 1, limits: baseline.value.limits, from_seq: 0, to_seq: n, reason: `baseline: first ${n} parts` });
}

async function openAlarms(t: Transaction, stationId: number, pending: Pending[]): Promise<OpenedAlarm[]> {
	const opened: OpenedAlarm[] = [];
	for (const { violation, chart, unit, seq } of pending) {
		// The rule engine counts points from the frozen limits; people read the chart's own numbering.
		const description = violation.description.replace(/, at point \d+$/, `, at chart point ${seq}`);
		const rows = await db().query<{ id: string; inserted: boolean }>(
			`INSERT INTO alarms (chart_id, rule, description, first_seq, last_seq, unit_id, lot_id, last_at)
			 VALUES (:chartId, :rule, :description, :seq, :seq, :unitId, :lotId, now())
			 ON CONFLICT (chart_id, rule) WHERE status <> 'closed'
			 DO UPDATE SET last_seq = GREATEST(alarms.last_seq, EXCLUDED.last_seq), occurrences = alarms.occurrences + 1, last_at = now()
			 RETURNING id, (xmax = 0) AS inserted`,
			{
				replacements: { chartId: chart.id, rule: violation.ruleId, description, seq, unitId: unit.id, lotId: unit.lotId },
				type: QueryTypes.SELECT,
				transaction: t
			}
		);
		const row = rows[0];
		if (!row?.inserted) continue;
		const why = await suspectOf(t, stationId, chart.kind, unit.lotId, Number(row.id));
		await db().query('UPDATE alarms SET suspect = :suspect, reasoning = :reasoning WHERE id = :id', {
			replacements: { ...why, id: row.id },
			transaction: t
		});
		opened.push({
			alarmId: Number(row.id),
			chartId: Number(chart.id),
			kind: chart.kind,
			characteristic: chart.characteristic,
			rule: violation.ruleId,
			description,
			lotId: unit.lotId,
			unitId: unit.id,
			...why
		});
	}
	return opened;
}

/**
 * Tester, product or lot: a reference-part alarm points at the tester (the reference part does
 * not change); a production alarm while the station's reference charts are in control points at
 * the product; production alarms on the same lot from two or more stations within two hours
 * point at the lot.
 */
async function suspectOf(t: Transaction, stationId: number, kind: ChartKind, lotId: number, alarmId: number) {
	if (kind === 'reference') {
		return { suspect: 'tester' as const, reasoning: 'The station’s reference part broke a control rule. The reference part does not change, so the tester (fixture, calibration, instrument) is suspect.' };
	}
	const [ref] = await db().query<{ open: string; charted: string }>(
		`SELECT count(*) FILTER (WHERE a.id IS NOT NULL) AS open, count(DISTINCT c.id) FILTER (WHERE c.status = 'active') AS charted
		 FROM charts c LEFT JOIN alarms a ON a.chart_id = c.id AND a.status <> 'closed'
		 WHERE c.station_id = :stationId AND c.kind = 'reference'`,
		{ replacements: { stationId }, type: QueryTypes.SELECT, transaction: t }
	);
	if (Number(ref?.open ?? 0) > 0) {
		return { suspect: 'tester' as const, reasoning: 'Production broke a control rule and this station’s reference part is out of control too, so the tester is suspect.' };
	}
	const [others] = await db().query<{ n: string }>(
		`SELECT count(DISTINCT c.station_id) AS n FROM alarms a JOIN charts c ON c.id = a.chart_id
		 WHERE a.lot_id = :lotId AND a.status <> 'closed' AND c.kind = 'production' AND c.station_id <> :stationId
		   AND a.opened_at > now() - interval '2 hours' AND a.id <> :alarmId`,
		{ replacements: { lotId, stationId, alarmId }, type: QueryTypes.SELECT, transaction: t }
	);
	const n = Number(others?.n ?? 0);
	if (n >= 1) {
		return { suspect: 'lot' as const, reasoning: `Production alarms on this lot come from ${n + 1} stations within two hours, so the lot is suspect.` };
	}
	const refNote = Number(ref?.charted ?? 0) > 0 ? 'this station’s reference part is in control' : 'this station’s reference part has no frozen limits yet, so the tester cannot be ruled out';
	return { suspect: 'product' as const, reasoning: `Production broke a control rule while ${refNote}, and no other station alarms on this lot: the product is suspect.` };
}
