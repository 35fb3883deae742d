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
 */
async function serialsOf(stationId: string, unitIds: number[]): Promise<Map<number, string>> {
	const found = new Map<number, string>();
	if (unitIds.length === 0) return found;
	let lo = Infinity;
	let hi = -Infinity;
	for (const u of unitIds) {
		if (u < lo) lo = u;
		if (u > hi) hi = u;
	}
	const rows = await db().query<{ id: string; serial: string }>(
		'SELECT id, serial FROM units WHERE station_id = :sid AND id BETWEEN :lo AND :hi ORDER BY id LIMIT :cap',
		{ replacements: { sid: stationId, lo, hi, cap: 4 * unitIds.length + 100 }, type: QueryTypes.SELECT }
	);
	for (const r of rows) found.set(Number(r.id), r.serial);
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

/** A chart's newest `limit` points (or those from `fromSeq`) in the view asked for. */
export async function chartDetail(id: number, view: ChartView, opts: { limit: number; fromSeq?: number; from?: string; to?: string }): Promise<ChartDetail | null> {
	const row = await chartRow(id);
	if (!row) return null;
	// A time range reads through chart_points_at_idx (chart_id, at).
	const range = `${opts.from ? ' AND p.at >= :from' : ''}${opts.to ? ' AND p.at < :to' : ''}`;
	const pointRows = await db().query<{ seq: number; value: number; at: Date; unit_id: string; rules: string[]; limits_version: number }>(
		opts.fromSeq === undefined
			? `SELECT p.seq, p.value, p.at, p.unit_id, p.rules, p.limits_version FROM chart_points p
			   WHERE p.chart_id = :id${range} ORDER BY p.seq DESC LIMIT :limit`
			: `SELECT p.seq, p.value, p.at, p.unit_id, p.rules, p.limits_version FROM chart_points p
			   WHERE p.chart_id = :id AND p.seq >= :fromSeq${range} ORDER BY p.seq LIMIT :limit`,
		{ replacements: { id, limit: opts.limit, fromSeq: opts.fromSeq, from: opts.from, to: opts.to }, type: QueryTypes.SELECT }
	);
	if (opts.fromSeq === undefined) pointRows.reverse();
	const serials = await serialsOf(row.station_id, pointRows.map((p) => Number(p.unit_id)));
	const points = pointRows.map((p) => ({ seq: p.seq, value: p.value, at: p.at.toISOString(), serial: serials.get(Number(p.unit_id)) ?? '', unitId: Number(p.unit_id), rules: p.rules, limitsVersion: p.limits_version }));
	const history = await db().query<{ version: number; from_seq: number; to_seq: number; reason: string; exclusions: { seq: number; reason: string }[]; created_at: Date; email: string | null }>(
		`SELECT l.version, l.from_seq, l.to_seq, l.reason, l.exclusions, l.created_at, u.email FROM chart_limits l LEFT JOIN users u ON u.id = l.created_by
		 WHERE l.chart_id = :id ORDER BY l.version DESC`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	const spec = specOf(row.plan, row.characteristic);
	const values = points.map((p) => p.value);
	const data = await viewData(row, view, points);
	const hasSpec = spec.lowerSpecLimit !== undefined || spec.upperSpecLimit !== undefined;
	const cap = hasSpec && values.length >= 2 ? capability(values, spec, { processInControl: Number(row.open_alarms) === 0 }) : null;
	return {
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
		limitsHistory: history.map((h) => ({
			version: h.version,
			fromSeq: h.from_seq,
			toSeq: h.to_seq,
			reason: h.reason,
			exclusions: h.exclusions,
			createdAt: h.created_at.toISOString(),
			createdBy: h.email
		})),
		spec,
		points,
		data,
		capability: cap?.ok ? cap.value : null,
		capabilityNote: !hasSpec ? 'No spec limits for this characteristic' : cap && !cap.ok ? cap.error.message : cap ? null : 'Too few points'
	};
}

async function viewData(row: ChartRow, view: ChartView, points: ChartPoint[]): Promise<ChartDetail['data']> {
	const values = points.map((p) => p.value);
	const limits = row.limits;
	const n = row.plan.spc?.subgroupSize ?? DEFAULT_SUBGROUP_SIZE;
	switch (view) {
		case 'imr': {
			const mr = points.map((p, i) => ({ seq: p.seq, value: i === 0 ? null : Math.abs(p.value - (points[i - 1]?.value ?? p.value)) }));
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
				subgroups: shown.value.subgroups.map((s) => ({ firstSeq: points[s.startIndex]?.seq ?? 0, mean: s.mean, dispersion: view === 'xbar-r' ? s.range : s.standardDeviation }))
			};
		}
		case 'ewma': {
			if (!limits?.ewma) return { view, error: 'The chart has no frozen limits yet' };
			const s = ewmaSeries(values, limits.ewma);
			if (!s.ok) return { view, error: s.error.message };
			return { view, series: s.value.map((p, i) => ({ seq: points[i]?.seq ?? i, ewma: p.ewma, upper: p.upperControlLimit, lower: p.lowerControlLimit, beyond: p.beyond })) };
		}
		case 'cusum': {
			if (!limits?.cusum) return { view, error: 'The chart has no frozen limits yet' };
			const s = cusumSeries(values, limits.cusum);
			if (!s.ok) return { view, error: s.error.message };
			return {
				view,
				decisionInterval: limits.cusum.decisionH * limits.cusum.sigma,
				series: s.value.map((p, i) => ({ seq: points[i]?.seq ?? i, upper: p.upper, lower: p.lower, signalUpper: p.signalUpper, signalLower: p.signalLower }))
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
