// Reading control charts: the series of a chart with its frozen limits in the view asked for
// (I-MR, X̄-R, X̄-S, EWMA, CUSUM, p), capability against the plan's spec limits, and the
// engineer's recomputation of limits from a chosen range with excluded points (audited).
import { QueryTypes } from 'sequelize';
import { biasLabel } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import {
	capability,
	computeBaseline,
	controlChartConstants,
	cusumSeries,
	ewmaSeries,
	groupByParts,
	initialRuleState,
	pChart,
	xbarRLimits,
	xbarSLimits,
	type CapabilityReport,
	type ChartRuleLimits
} from '$lib/spc';
import { audit, type Actor } from './audit';
import { db } from './db';
import { chartParameters } from './spc';

export const CHART_VIEWS = ['imr', 'xbar-r', 'xbar-s', 'ewma', 'cusum', 'p'] as const;
export type ChartView = (typeof CHART_VIEWS)[number];
/** Subgroup size of X̄ charts when the plan names none (common practice: 5). */
export const DEFAULT_SUBGROUP_SIZE = 5;
/** Parts per p-chart point when the plan names none (our choice). */
export const DEFAULT_P_CHART_PARTS = 50;

export type ChartSummary = {
	id: number;
	station: string;
	productCode: string;
	kind: 'production' | 'reference';
	characteristic: string;
	unit: string;
	status: 'baseline' | 'active';
	pointCount: number;
	limitsVersion: number;
	openAlarms: number;
};

type SummaryRow = {
	id: string;
	station: string;
	code: string;
	kind: ChartSummary['kind'];
	characteristic: string;
	unit: string;
	status: ChartSummary['status'];
	point_count: number;
	limits_version: number;
	open_alarms: string;
};

export async function listCharts(f: { station?: string; product?: string; kind?: string } = {}): Promise<ChartSummary[]> {
	const where: string[] = [];
	if (f.station) where.push('lower(s.name) = lower(:station)');
	if (f.product) where.push('lower(p.code) = lower(:product)');
	if (f.kind) where.push('c.kind = :kind');
	const rows = await db().query<SummaryRow>(
		`SELECT c.id, s.name AS station, p.code, c.kind, c.characteristic, c.unit, c.status, c.point_count, c.limits_version,
		   (SELECT count(*) FROM alarms a WHERE a.chart_id = c.id AND a.status <> 'closed') AS open_alarms
		 FROM charts c JOIN stations s ON s.id = c.station_id JOIN products p ON p.id = c.product_id
		 ${where.length ? `WHERE ${where.join(' AND ')}` : ''}
		 ORDER BY p.code, s.name, c.kind, c.id`,
		{ replacements: f, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({
		id: Number(r.id),
		station: r.station,
		productCode: r.code,
		kind: r.kind,
		characteristic: r.characteristic,
		unit: r.unit,
		status: r.status,
		pointCount: r.point_count,
		limitsVersion: r.limits_version,
		openAlarms: Number(r.open_alarms)
	}));
}

type ChartRow = SummaryRow & { station_id: string; product_id: string; limits: ChartRuleLimits | null; plan: SpecPlan };

async function chartRow(id: number): Promise<ChartRow | null> {
	const rows = await db().query<ChartRow>(
		`SELECT c.*, s.name AS station, p.code,
		   (SELECT count(*) FROM alarms a WHERE a.chart_id = c.id AND a.status <> 'closed') AS open_alarms,
		   (SELECT plan FROM plan_versions v WHERE v.product_id = c.product_id ORDER BY version DESC LIMIT 1) AS plan
		 FROM charts c JOIN stations s ON s.id = c.station_id JOIN products p ON p.id = c.product_id WHERE c.id = :id`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	return rows[0] ?? null;
}

/** Spec limits of a characteristic in the chart's unit (pF for capacitance), from the current plan. */
export function specOf(plan: SpecPlan, characteristic: string): { lowerSpecLimit?: number; upperSpecLimit?: number } {
	const point = plan.points.find((p) => `C@${biasLabel(p.biasV)}V` === characteristic);
	if (point) {
		return {
			...(point.minF !== undefined ? { lowerSpecLimit: point.minF * 1e12 } : {}),
			...(point.maxF !== undefined ? { upperSpecLimit: point.maxF * 1e12 } : {})
		};
	}
	const r = plan.ratio;
	if (r && `ratio C${biasLabel(r.lowBiasV)}/C${biasLabel(r.highBiasV)}` === characteristic) {
		return { ...(r.min !== undefined ? { lowerSpecLimit: r.min } : {}), ...(r.max !== undefined ? { upperSpecLimit: r.max } : {}) };
	}
	return {};
}

export type ChartPoint = { seq: number; value: number; at: string; serial: string; unitId: number; rules: string[]; limitsVersion: number };

type ViewData =
	| { view: 'imr'; movingRange: { seq: number; value: number | null }[]; mrLimits: { centerLine: number; upperControlLimit: number; lowerControlLimit: number } | null }
	| { view: 'xbar-r' | 'xbar-s'; subgroupSize: number; subgroups: { firstSeq: number; mean: number; dispersion: number }[]; xbar: unknown; dispersion: unknown }
	| { view: 'ewma'; series: { seq: number; ewma: number; upper: number; lower: number; beyond: string | null }[] }
	| { view: 'cusum'; series: { seq: number; upper: number; lower: number; signalUpper: boolean; signalLower: boolean }[]; decisionInterval: number }
	| { view: 'p'; partsPerPoint: number; series: { index: number; value: number; lcl: number; ucl: number; beyond: string | null }[]; centerLine: number };

export type ChartDetail = {
	chart: ChartSummary;
	limits: ChartRuleLimits | null;
	limitsHistory: { version: number; fromSeq: number; toSeq: number; reason: string; exclusions: { seq: number; reason: string }[]; createdAt: string; createdBy: string | null }[];
	spec: { lowerSpecLimit?: number; upperSpecLimit?: number };
	points: ChartPoint[];
	data: ViewData | { view: ChartView; error: string };
	/** Null when the characteristic has no spec limits or too few points (see capabilityNote). */
	capability: CapabilityReport | null;
	capabilityNote: string | null;
};

/**
 * The serials of a chart's parts. A chart's parts are its station's, in id order: one range
 * scan of the station's parts (units_station_idx) reads them page by page, where a lookup per
 * point costs an index descent each (100 000 points: about 20 times the buffer reads). The scan
 * is bounded by a few times the points asked for; parts it does not reach are looked up by id.
 * The scan comes back as one row of two JSON arrays (ids, serials), not a row per part.
 */
async function serialsOf(stationId: string, unitIds: readonly number[]): Promise<Map<number, string>> {
	const found = new Map<number, string>();
	if (unitIds.length === 0) return found;
	let lo = Infinity;
	let hi = -Infinity;
	for (const u of unitIds) {
		if (u < lo) lo = u;
		if (u > hi) hi = u;
	}
	const rows = await db().query<{ ids: string; serials: string }>(
		`SELECT '[' || coalesce(string_agg(id::text, ','), '') || ']' AS ids, coalesce(json_agg(serial), '[]')::text AS serials
		 FROM (SELECT id, serial FROM units WHERE station_id = :sid AND id BETWEEN :lo AND :hi ORDER BY id LIMIT :cap) x`,
		{ replacements: { sid: stationId, lo, hi, cap: 4 * unitIds.length + 100 }, type: QueryTypes.SELECT }
	);
	const ids = JSON.parse(rows[0]?.ids ?? '[]') as number[];
	const serials = JSON.parse(rows[0]?.serials ?? '[]') as string[];
	ids.forEach((u, i) => found.set(u, serials[i] ?? ''));
	const missing = unitIds.filter((u) => !found.has(u));
	if (missing.length) {
		const more = await db().query<{ id: string; serial: string }>('SELECT id, serial FROM units WHERE id = ANY(ARRAY[:ids]::bigint[])', {
			replacements: { ids: missing },
			type: QueryTypes.SELECT
		});
		for (const r of more) found.set(Number(r.id), r.serial);
	}
	return found;
}

export type ChartRange = { limit: number; fromSeq?: number; from?: string; to?: string };

/**
 * A chart's points as JSON texts made by PostgreSQL, one per column, in seq order: the newest
 * `limit` points (or the first `limit` from `fromSeq`) in the time range. One row comes back
 * instead of one per point, and the columns the answer passes through untouched (at, unitId,
 * limitsVersion, rules) are never parsed. `at` is in epoch milliseconds (microseconds cut, as
 * a JavaScript Date cuts them); `rules` holds only the points that broke a rule, by seq.
 */
type PointText = { n: number; seq: string; value: string; at: string; unitId: string; limitsVersion: string; rules: string };

async function pointText(id: number, opts: ChartRange): Promise<PointText> {
	// A time range reads through chart_points_at_idx (chart_id, at).
	const range = `${opts.from ? ' AND p.at >= :from' : ''}${opts.to ? ' AND p.at < :to' : ''}`;
	// The newest `limit`: the seq of the limit-th newest point (an index-only scan of the primary
	// key), then an ascending range scan of (chart_id, seq) from there, so the aggregates read
	// the points in seq order. (Two statements on two connections, or the seq range as literals,
	// measured no faster on the 1 M-part database: the planner then sorts a bitmap scan.)
	const lower =
		opts.fromSeq === undefined ? `coalesce((SELECT p.seq FROM chart_points p WHERE p.chart_id = :id${range} ORDER BY p.seq DESC OFFSET :limit - 1 LIMIT 1), 0)` : ':fromSeq';
	const list = (expr: string) => `'[' || coalesce(string_agg(${expr}, ','), '') || ']'`;
	// Epoch ms: the epoch seconds (a double, exact to well under 1 µs today) times 1000, plus half
	// a microsecond so a whole millisecond never falls just below itself, cut to the millisecond.
	const rows = await db().query<PointText>(
		`SELECT count(*)::int AS n, ${list('seq::text')} AS seq, ${list('value::text')} AS value,
		   ${list("floor(date_part('epoch', at) * 1000 + 0.0005)::bigint::text")} AS at,
		   ${list('unit_id::text')} AS "unitId", ${list('limits_version::text')} AS "limitsVersion",
		   coalesce(json_object_agg(seq, rules) FILTER (WHERE cardinality(rules) > 0), '{}'::json)::text AS rules
		 FROM (SELECT p.seq, p.value, p.at, p.unit_id, p.rules, p.limits_version FROM chart_points p
		       WHERE p.chart_id = :id AND p.seq >= ${lower}${range} ORDER BY p.seq LIMIT :limit) x`,
		{ replacements: { id, limit: opts.limit, fromSeq: opts.fromSeq, from: opts.from, to: opts.to }, type: QueryTypes.SELECT }
	);
	const r = rows[0];
	if (!r) throw new Error('The point aggregate returned no row');
	return r;
}

async function limitsHistoryOf(id: number): Promise<ChartDetail['limitsHistory']> {
	const history = await db().query<{ version: number; from_seq: number; to_seq: number; reason: string; exclusions: { seq: number; reason: string }[]; created_at: Date; email: string | null }>(
		`SELECT l.version, l.from_seq, l.to_seq, l.reason, l.exclusions, l.created_at, u.email FROM chart_limits l LEFT JOIN users u ON u.id = l.created_by
		 WHERE l.chart_id = :id ORDER BY l.version DESC`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	return history.map((h) => ({
		version: h.version,
		fromSeq: h.from_seq,
		toSeq: h.to_seq,
		reason: h.reason,
		exclusions: h.exclusions,
		createdAt: h.created_at.toISOString(),
		createdBy: h.email
	}));
}

/** Everything of a chart's answer but its points, and the points' seq and value columns. */
type ChartParts = Omit<ChartDetail, 'points'> & { row: ChartRow; text: PointText; seq: number[]; values: number[]; timings: ChartTimings };

/** Where a chart answer's time went, in ms (Server-Timing of the columnar answer). */
export type ChartTimings = { sql: number; parse: number; view: number; capability: number; json?: number };

async function chartParts(id: number, view: ChartView, opts: ChartRange): Promise<ChartParts | null> {
	const t0 = performance.now();
	const [row, text, history] = await Promise.all([chartRow(id), pointText(id, opts), limitsHistoryOf(id)]);
	if (!row) return null;
	const t1 = performance.now();
	const seq = JSON.parse(text.seq) as number[];
	const values = JSON.parse(text.value) as number[];
	// PostgreSQL aggregates a sorted subquery in its order; say so loudly if that ever changes.
	for (let i = 1; i < seq.length; i++) if ((seq[i] ?? 0) <= (seq[i - 1] ?? 0)) throw new Error(`Chart ${id}: points out of seq order`);
	const spec = specOf(row.plan, row.characteristic);
	const t2 = performance.now();
	const data = await viewData(row, view, seq, values);
	const t3 = performance.now();
	const hasSpec = spec.lowerSpecLimit !== undefined || spec.upperSpecLimit !== undefined;
	const cap = hasSpec && values.length >= 2 ? capability(values, spec, { processInControl: Number(row.open_alarms) === 0 }) : null;
	return {
		row,
		text,
		seq,
		values,
		timings: { sql: t1 - t0, parse: t2 - t1, view: t3 - t2, capability: performance.now() - t3 },
		chart: {
			id: Number(row.id),
			station: row.station,
			productCode: row.code,
			kind: row.kind,
			characteristic: row.characteristic,
			unit: row.unit,
			status: row.status,
			pointCount: row.point_count,
			limitsVersion: row.limits_version,
			openAlarms: Number(row.open_alarms)
		},
		limits: row.limits,
		limitsHistory: history,
		spec,
		data,
		capability: cap?.ok ? cap.value : null,
		capabilityNote: !hasSpec ? 'No spec limits for this characteristic' : cap && !cap.ok ? cap.error.message : cap ? null : 'Too few points'
	};
}

/** A chart's newest `limit` points (or those from `fromSeq`) in the view asked for: a record per point. */
export async function chartDetail(id: number, view: ChartView, opts: ChartRange): Promise<ChartDetail | null> {
	const parts = await chartParts(id, view, opts);
	if (!parts) return null;
	const { row, text, seq, values, timings: _timings, ...head } = parts;
	const at = JSON.parse(text.at) as number[];
	const unitIds = JSON.parse(text.unitId) as number[];
	const versions = JSON.parse(text.limitsVersion) as number[];
	const rules = JSON.parse(text.rules) as Record<string, string[]>;
	const serials = await serialsOf(row.station_id, unitIds);
	const points = seq.map((s, i) => {
		const unitId = unitIds[i] ?? 0;
		return { seq: s, value: values[i] ?? 0, at: new Date(at[i] ?? 0).toISOString(), serial: serials.get(unitId) ?? '', unitId, rules: rules[s] ?? [], limitsVersion: versions[i] ?? 0 };
	});
	return { chart: head.chart, limits: head.limits, limitsHistory: head.limitsHistory, spec: head.spec, points, data: head.data, capability: head.capability, capabilityNote: head.capabilityNote };
}

/** The lists of records in each view's data, with their fields (the columnar answer's columns). */
const VIEW_LISTS: Record<ChartView, Record<string, readonly string[]>> = {
	imr: { movingRange: ['seq', 'value'] },
	'xbar-r': { subgroups: ['firstSeq', 'mean', 'dispersion'] },
	'xbar-s': { subgroups: ['firstSeq', 'mean', 'dispersion'] },
	ewma: { series: ['seq', 'ewma', 'upper', 'lower', 'beyond'] },
	cusum: { series: ['seq', 'upper', 'lower', 'signalUpper', 'signalLower'] },
	p: { series: ['index', 'value', 'lcl', 'ucl', 'beyond'] }
};

/** The view data with each list of records as a record of lists, field by field (an error stays as it is). */
export function columnsOf(data: ChartDetail['data']): Record<string, unknown> {
	if ('error' in data) return data;
	const lists = VIEW_LISTS[data.view];
	const out: Record<string, unknown> = {};
	for (const [key, v] of Object.entries(data)) {
		const fields = lists[key];
		out[key] = fields && Array.isArray(v) ? Object.fromEntries(fields.map((f) => [f, v.map((x: Record<string, unknown>) => x[f])])) : v;
	}
	return out;
}

/**
 * The columnar answer (`shape=columns`): the same header, view and capability as chartDetail,
 * with the points as a record of lists (seq, value, at in epoch ms, unitId, limitsVersion, and
 * rules only for the points that broke one, by seq) and every list of records in the view data
 * as a record of lists. No serials: a point's part is its unitId. Returned as the JSON text
 * itself, the point columns spliced in as PostgreSQL wrote them.
 */
export async function chartColumnsJson(id: number, view: ChartView, opts: ChartRange): Promise<{ body: string; timings: ChartTimings } | null> {
	const parts = await chartParts(id, view, opts);
	if (!parts) return null;
	const { text } = parts;
	const t0 = performance.now();
	const head = JSON.stringify({ chart: parts.chart, limits: parts.limits, limitsHistory: parts.limitsHistory, spec: parts.spec });
	const tail = JSON.stringify({ data: columnsOf(parts.data), capability: parts.capability, capabilityNote: parts.capabilityNote });
	const points = `{"seq":${text.seq},"value":${text.value},"at":${text.at},"unitId":${text.unitId},"limitsVersion":${text.limitsVersion},"rules":${text.rules}}`;
	const body = `${head.slice(0, -1)},"points":${points},${tail.slice(1)}`;
	return { body, timings: { ...parts.timings, json: performance.now() - t0 } };
}

/** The columnar answer's points (see chartColumnsJson). */
export type ChartPointColumns = { seq: number[]; value: number[]; at: number[]; unitId: number[]; limitsVersion: number[]; rules: Record<string, string[]> };

async function viewData(row: ChartRow, view: ChartView, seqs: readonly number[], values: readonly number[]): Promise<ChartDetail['data']> {
	const limits = row.limits;
	const n = row.plan.spc?.subgroupSize ?? DEFAULT_SUBGROUP_SIZE;
	switch (view) {
		case 'imr': {
			const mr = seqs.map((seq, i) => ({ seq, value: i === 0 ? null : Math.abs((values[i] ?? 0) - (values[i - 1] ?? values[i] ?? 0)) }));
			const c = controlChartConstants(2);
			if (!limits || !c.ok) return { view, movingRange: mr, mrLimits: null };
			// MR̄ = d2·sigma for span 2; UCL = D4·MR̄, LCL = D3·MR̄ = 0.
			const mrBar = limits.shewhart.sigma * c.value.d2;
			return { view, movingRange: mr, mrLimits: { centerLine: mrBar, upperControlLimit: c.value.D4 * mrBar, lowerControlLimit: c.value.D3 * mrBar } };
		}
		case 'xbar-r':
		case 'xbar-s': {
			// Limits from the frozen baseline's own subgroups; the displayed subgroups use them.
			const baselineTo = (await db().query<{ to_seq: number }>('SELECT to_seq FROM chart_limits WHERE chart_id = :id ORDER BY version DESC LIMIT 1', { replacements: { id: row.id }, type: QueryTypes.SELECT }))[0]?.to_seq;
			const base = await db().query<{ value: number }>('SELECT value FROM chart_points WHERE chart_id = :id AND seq < :to ORDER BY seq', {
				replacements: { id: row.id, to: baselineTo ?? 0 },
				type: QueryTypes.SELECT
			});
			const fit = (view === 'xbar-r' ? xbarRLimits : xbarSLimits)(base.map((b) => b.value), n);
			const shown = (view === 'xbar-r' ? xbarRLimits : xbarSLimits)(values, n);
			if (!fit.ok) return { view, error: `No subgroup limits yet: ${fit.error.message}` };
			if (!shown.ok) return { view, error: shown.error.message };
			return {
				view,
				subgroupSize: n,
				xbar: fit.value.xbar,
				dispersion: fit.value.dispersion,
				subgroups: shown.value.subgroups.map((s) => ({ firstSeq: seqs[s.startIndex] ?? 0, mean: s.mean, dispersion: view === 'xbar-r' ? s.range : s.standardDeviation }))
			};
		}
		case 'ewma': {
			if (!limits?.ewma) return { view, error: 'The chart has no frozen limits yet' };
			const s = ewmaSeries(values, limits.ewma);
			if (!s.ok) return { view, error: s.error.message };
			return { view, series: s.value.map((p, i) => ({ seq: seqs[i] ?? i, ewma: p.ewma, upper: p.upperControlLimit, lower: p.lowerControlLimit, beyond: p.beyond })) };
		}
		case 'cusum': {
			if (!limits?.cusum) return { view, error: 'The chart has no frozen limits yet' };
			const s = cusumSeries(values, limits.cusum);
			if (!s.ok) return { view, error: s.error.message };
			return {
				view,
				decisionInterval: limits.cusum.decisionH * limits.cusum.sigma,
				series: s.value.map((p, i) => ({ seq: seqs[i] ?? i, upper: p.upper, lower: p.lower, signalUpper: p.signalUpper, signalLower: p.signalLower }))
			};
		}
		case 'p': {
			const per = row.plan.spc?.pChartParts ?? DEFAULT_P_CHART_PARTS;
			const passed = await db().query<{ pass: boolean }>(
				`SELECT pass FROM units WHERE station_id = :sid AND kind = 'production'
				   AND plan_version_id IN (SELECT id FROM plan_versions WHERE product_id = :pid) ORDER BY id DESC LIMIT :limit`,
				{ replacements: { sid: row.station_id, pid: row.product_id, limit: per * 60 }, type: QueryTypes.SELECT }
			);
			const groups = groupByParts(passed.reverse().map((p) => p.pass), per);
			if (!groups.ok) return { view, error: groups.error.message };
			if (groups.value.length === 0) return { view, error: `Fewer than ${per} parts tested yet` };
			const chart = pChart(groups.value, { statistic: 'yield' });
			if (!chart.ok) return { view, error: chart.error.message };
			return {
				view,
				partsPerPoint: per,
				centerLine: chart.value.centerLine,
				series: chart.value.points.map((p) => ({ index: p.index, value: p.value, lcl: p.limits.lowerControlLimit, ucl: p.limits.upperControlLimit, beyond: p.beyond }))
			};
		}
	}
}

export type RecomputeResult = { ok: true; version: number; limits: ChartRuleLimits } | { ok: false; status: 400 | 404; message: string };

/**
 * New frozen limits from points [fromSeq, toSeq) minus exclusions (each with a reason). The
 * chart's rule state restarts, since old state belongs to the old limits. Audited.
 */
export async function recomputeLimits(
	actor: Actor,
	chartId: number,
	input: { fromSeq: number; toSeq: number; exclusions: { seq: number; reason: string }[]; reason: string }
): Promise<RecomputeResult> {
	return db().transaction(async (t) => {
		const rows = await db().query<{ id: string; limits: ChartRuleLimits | null; limits_version: number; point_count: number; plan: SpecPlan | null }>(
			`SELECT id, limits, limits_version, point_count,
			   (SELECT v.plan FROM plan_versions v WHERE v.product_id = charts.product_id ORDER BY v.version DESC LIMIT 1) AS plan
			 FROM charts WHERE id = :id FOR UPDATE`,
			{ replacements: { id: chartId }, type: QueryTypes.SELECT, transaction: t }
		);
		const chart = rows[0];
		if (!chart) return { ok: false as const, status: 404 as const, message: 'No such chart' };
		if (input.toSeq > chart.point_count) return { ok: false as const, status: 400 as const, message: `The chart has ${chart.point_count} points` };
		const pts = await db().query<{ seq: number; value: number }>('SELECT seq, value FROM chart_points WHERE chart_id = :id AND seq >= :from AND seq < :to ORDER BY seq', {
			replacements: { id: chartId, from: input.fromSeq, to: input.toSeq },
			type: QueryTypes.SELECT,
			transaction: t
		});
		const index = new Map(pts.map((p, i) => [p.seq, i]));
		const exclusions = [];
		for (const e of input.exclusions) {
			const i = index.get(e.seq);
			if (i === undefined) return { ok: false as const, status: 400 as const, message: `Point ${e.seq} is not in the chosen range` };
			exclusions.push({ index: i, reason: e.reason });
		}
		const baseline = computeBaseline(
			pts.map((p) => p.value),
			// The product's current EWMA and CUSUM parameters apply to the new limits.
			{ selection: { fromIndex: 0, toIndex: pts.length, exclusions }, ...(chart.plan ? chartParameters(chart.plan) : {}) }
		);
		if (!baseline.ok) return { ok: false as const, status: 400 as const, message: baseline.error.message };
		const version = chart.limits_version + 1;
		await db().query(
			`INSERT INTO chart_limits (chart_id, version, limits, from_seq, to_seq, exclusions, reason, created_by)
			 VALUES (:id, :version, :limits, :from, :to, :exclusions, :reason, :by)`,
			{
				replacements: { id: chartId, version, limits: JSON.stringify(baseline.value.limits), from: input.fromSeq, to: input.toSeq, exclusions: JSON.stringify(input.exclusions), reason: input.reason, by: actor.userId },
				transaction: t
			}
		);
		await db().query("UPDATE charts SET limits = :limits, limits_version = :version, rule_state = :state, status = 'active' WHERE id = :id", {
			replacements: { id: chartId, limits: JSON.stringify(baseline.value.limits), version, state: JSON.stringify(initialRuleState()) },
			transaction: t
		});
		await audit(actor, 'control-limits', chartId, `version ${version}`, chart.limits ? { version: chart.limits_version, limits: chart.limits } : null, {
			version,
			limits: baseline.value.limits,
			fromSeq: input.fromSeq,
			toSeq: input.toSeq,
			exclusions: input.exclusions,
			reason: input.reason
		}, t);
		return { ok: true as const, version, limits: baseline.value.limits };
	});
}
