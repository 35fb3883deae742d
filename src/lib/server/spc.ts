// Control charts on every accepted part, inside the station's post: the chart rows are locked,
// the new points appended, the rules stepped with each chart's bounded state, and alarms opened
// (one open alarm per chart and rule). The work per part is bounded by the rule windows.
import { QueryTypes, type Transaction } from 'sequelize';
import { biasLabel } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import { computeBaseline, initialRuleState, step, type ChartRuleLimits, type RuleId, type RuleState, type Violation } from '$lib/spc';
import { ALL_RULE_IDS } from '$lib/spc/types';
import { db } from './db';

/**
 * Rules on by default: WE1 (a point beyond 3 sigma) and WE4 (eight in a row on one side, the
 * drift detector) — our choice. Every added rule raises the false-alarm rate of an in-control
 * process, and a product charts several correlated characteristics; a plan can name more in
 * `spc.rules`.
 */
export const DEFAULT_RULES: readonly RuleId[] = ['WE1', 'WE4'];
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

function rulesOf(plan: SpecPlan): RuleId[] {
	const wanted = plan.spc?.rules;
	if (!wanted) return [...DEFAULT_RULES];
	return ALL_RULE_IDS.filter((r) => wanted.includes(r));
}

function baselineOf(plan: SpecPlan, kind: ChartKind): number {
	const spc = plan.spc;
	return kind === 'reference' ? (spc?.referenceBaselineParts ?? DEFAULT_REFERENCE_BASELINE) : (spc?.baselineParts ?? DEFAULT_BASELINE);
}

type ChartRow = {
	id: string;
	kind: ChartKind;
	characteristic: string;
	status: 'baseline' | 'active';
	point_count: number;
	limits: ChartRuleLimits | null;
	limits_version: number;
	rule_state: RuleState | null;
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

/**
 * Charts the units of one accepted batch (same station and product) inside its transaction.
 * Returns the alarms this batch opened (not the ones it only extended).
 */
export async function chartBatch(t: Transaction, stationId: number, productId: number, units: SpcUnit[]): Promise<OpenedAlarm[]> {
	const charted = units.filter((u): u is SpcUnit & { kind: ChartKind } => u.kind === 'production' || u.kind === 'reference');
	if (charted.length === 0) return [];
	// Which charts this batch touches, and the values per chart in the batch's order.
	const work = new Map<string, { kind: ChartKind; characteristic: string; unit: string; items: { unit: SpcUnit; value: number }[] }>();
	for (const u of charted) {
		for (const c of characteristicsOf(u.plan)) {
			const value = c.value(u);
			if (value === null) continue;
			const key = `${u.kind}|${c.name}`;
			const entry = work.get(key) ?? { kind: u.kind, characteristic: c.name, unit: c.unit, items: [] };
			entry.items.push({ unit: u, value });
			work.set(key, entry);
		}
	}
	if (work.size === 0) return [];
	const specs = [...work.values()].map((w) => ({ kind: w.kind, characteristic: w.characteristic, unit: w.unit }));
	const lockCharts = () =>
		// Locked in id order, so two posts touching the same charts cannot deadlock.
		db().query<ChartRow>(
			`SELECT c.id, c.kind, c.characteristic, c.status, c.point_count, c.limits, c.limits_version, c.rule_state
			 FROM charts c JOIN jsonb_to_recordset(CAST(:specs AS jsonb)) AS x(kind text, characteristic text) ON x.kind = c.kind AND x.characteristic = c.characteristic
			 WHERE c.station_id = :stationId AND c.product_id = :productId ORDER BY c.id FOR UPDATE OF c`,
			{ replacements: { stationId, productId, specs: JSON.stringify(specs) }, type: QueryTypes.SELECT, transaction: t }
		);
	// Usually every chart exists already: one round trip. New charts are created, then locked.
	let rows = await lockCharts();
	if (rows.length < specs.length) {
		await db().query(
			`INSERT INTO charts (station_id, product_id, kind, characteristic, unit)
			 SELECT :stationId, :productId, kind, characteristic, unit FROM jsonb_to_recordset(CAST(:specs AS jsonb)) AS x(kind text, characteristic text, unit text)
			 ON CONFLICT DO NOTHING`,
			{ replacements: { stationId, productId, specs: JSON.stringify(specs) }, transaction: t }
		);
		rows = await lockCharts();
	}
	const points: Record<string, unknown>[] = [];
	const limitRows: Record<string, unknown>[] = [];
	const pending: Pending[] = [];
	for (const chart of rows) {
		const w = work.get(`${chart.kind}|${chart.characteristic}`);
		if (!w) continue;
		for (const { unit, value } of w.items) {
			const seq = chart.point_count;
			let fired: Violation[] = [];
			if (chart.status === 'active' && chart.limits && chart.rule_state) {
				const r = step(chart.rule_state, chart.limits, value, rulesOf(unit.plan));
				if (r.ok) {
					chart.rule_state = r.value.state;
					fired = r.value.violations;
				}
			}
			points.push({ chart_id: chart.id, seq, unit_id: unit.id, value, at: unit.testedAt, limits_version: chart.limits_version, rules: fired.map((v) => v.ruleId) });
			for (const violation of fired) pending.push({ violation, chart, unit, seq });
			chart.point_count++;
			if (chart.status === 'baseline' && chart.point_count >= baselineOf(unit.plan, chart.kind)) {
				await freezeBaseline(t, chart, baselineOf(unit.plan, chart.kind), points, limitRows);
			}
		}
	}
	if (limitRows.length) {
		await db().query(
			`INSERT INTO chart_limits (chart_id, version, limits, from_seq, to_seq, reason)
			 SELECT chart_id, version, limits, from_seq, to_seq, reason FROM jsonb_to_recordset(CAST(:rows AS jsonb))
			   AS x(chart_id bigint, version integer, limits jsonb, from_seq integer, to_seq integer, reason text)`,
			{ replacements: { rows: JSON.stringify(limitRows) }, transaction: t }
		);
	}
	// The new points and the charts' new state in one statement (one round trip).
	await db().query(
		`WITH pts AS (
		   INSERT INTO chart_points (chart_id, seq, unit_id, value, at, limits_version, rules)
		   SELECT chart_id, seq, unit_id, value, at, limits_version, rules FROM jsonb_to_recordset(CAST(:points AS jsonb))
		     AS x(chart_id bigint, seq integer, unit_id bigint, value float8, at timestamptz, limits_version integer, rules text[]))
		 UPDATE charts c SET status = x.status, point_count = x.point_count, limits = x.limits, limits_version = x.limits_version, rule_state = x.rule_state
		 FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(id bigint, status text, point_count integer, limits jsonb, limits_version integer, rule_state jsonb)
		 WHERE c.id = x.id`,
		{ replacements: { points: JSON.stringify(points), rows: JSON.stringify(rows) }, transaction: t }
	);
	return openAlarms(t, stationId, pending);
}

/** Freezes a chart's limits from its first `n` points (stored ones plus this batch's). */
async function freezeBaseline(t: Transaction, chart: ChartRow, n: number, batchPoints: Record<string, unknown>[], limitRows: Record<string, unknown>[]) {
	const stored = await db().query<{ value: number }>('SELECT value FROM chart_points WHERE chart_id = :id ORDER BY seq LIMIT :n', {
		replacements: { id: chart.id, n },
		type: QueryTypes.SELECT,
		transaction: t
	});
	const fresh = batchPoints.filter((p) => p.chart_id === chart.id).map((p) => Number(p.value));
	const values = [...stored.map((s) => s.value), ...fresh].slice(0, n);
	const baseline = computeBaseline(values, { baselineParts: n });
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
