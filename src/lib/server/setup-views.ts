// Read models for the set-up screens (products, stations, lots), as plain objects ready to show.
import { QueryTypes } from 'sequelize';
import { DEFAULT_BINS, GOOD_BIN } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import { BIN_CATEGORIES, BIN_LABELS } from '$lib/schemas/plan-form';
import { latestCalibration, calibrationHistory, type CalibrationRecord } from './calibrations';
import { listLots, listStations, type LotRow, type StationRow } from './catalog';
import { db } from './db';
import { lotSummary, lotUnits } from './lots';
import { getProductByCode, planHistory, type ProductRecord } from './products';
import { getStationByName, type StationRecord } from './stations';

const num = (v: number, digits = 10) => String(Number(v.toPrecision(digits)));
const pf = (f: number) => `${num(f * 1e12, 6)} pF`;

export type PlanLine = { field: string; value: string };

/** A plan as lines an engineer reads ("C at 4 V" → "15–17.4 pF"); also the keys of the version diff. */
export function planLines(plan: SpecPlan): PlanLine[] {
	const lines: PlanLine[] = plan.points.map((p) => {
		const lo = p.minF === undefined ? null : pf(p.minF);
		const hi = p.maxF === undefined ? null : pf(p.maxF);
		const value = lo && hi ? `${lo.replace(' pF', '')} – ${hi}` : lo ? `≥ ${lo}` : hi ? `≤ ${hi}` : 'measured, not judged';
		return { field: `C at ${num(p.biasV, 6)} V`, value };
	});
	const r = plan.ratio;
	if (r) {
		const lim = r.min !== undefined && r.max !== undefined ? `${num(r.min)} – ${num(r.max)}` : r.min !== undefined ? `≥ ${num(r.min)}` : `≤ ${num(r.max ?? 0)}`;
		lines.push({ field: 'Ratio', value: `C(${num(r.lowBiasV)} V) / C(${num(r.highBiasV)} V): ${lim}` });
	}
	if (plan.q) lines.push({ field: 'Q', value: `≥ ${num(plan.q.min)} at ${num(plan.q.biasV)} V` });
	if (plan.leakage) lines.push({ field: 'Leakage', value: `≤ ${num(plan.leakage.maxA * 1e9, 6)} nA at ${num(plan.leakage.biasV)} V` });
	if (plan.fit) lines.push({ field: 'Fit quality', value: `RMS ≤ ${num(plan.fit.maxRmsPct)} %` });
	if (plan.matching) lines.push({ field: 'Matching', value: `sets of ${plan.matching.setSize} within ${num(plan.matching.tolerancePct)} %` });
	for (const c of BIN_CATEGORIES) {
		const b = plan.bins?.[c];
		if (b !== undefined) lines.push({ field: `Bin for ${BIN_LABELS[c].toLowerCase()}`, value: String(b) });
	}
	const spc = plan.spc;
	if (spc?.baselineParts !== undefined) lines.push({ field: 'SPC baseline', value: `${spc.baselineParts} parts` });
	if (spc?.referenceBaselineParts !== undefined) lines.push({ field: 'Reference baseline', value: `${spc.referenceBaselineParts} parts` });
	if (spc?.subgroupSize !== undefined) lines.push({ field: 'X̄ subgroup', value: `${spc.subgroupSize} parts` });
	if (spc?.pChartParts !== undefined) lines.push({ field: 'Yield chart per', value: `${spc.pChartParts} parts` });
	if (spc?.ewmaLambda !== undefined) lines.push({ field: 'EWMA λ', value: num(spc.ewmaLambda) });
	if (spc?.ewmaLimitWidthSigma !== undefined) lines.push({ field: 'EWMA L', value: `${num(spc.ewmaLimitWidthSigma)} σ` });
	if (spc?.cusumReferenceK !== undefined) lines.push({ field: 'CUSUM k', value: `${num(spc.cusumReferenceK)} σ` });
	if (spc?.cusumDecisionH !== undefined) lines.push({ field: 'CUSUM h', value: `${num(spc.cusumDecisionH)} σ` });
	if (spc?.rules !== undefined) lines.push({ field: 'Control rules', value: spc.rules.length ? spc.rules.join(', ') : 'none' });
	return lines;
}

export type PlanChange = { field: string; before: string | null; after: string | null };

/** Field-by-field difference of two plans (points matched by bias, so an inserted point is one change). */
export function planDiff(before: SpecPlan, after: SpecPlan): PlanChange[] {
	const a = new Map(planLines(before).map((l) => [l.field, l.value]));
	const b = new Map(planLines(after).map((l) => [l.field, l.value]));
	const fields = [...new Set([...b.keys(), ...a.keys()])];
	return fields.flatMap((field) => {
		const x = a.get(field) ?? null;
		const y = b.get(field) ?? null;
		return x === y ? [] : [{ field, before: x, after: y }];
	});
}

export type AuditRow = { id: number; at: string; actor: string; entity: string; action: string };

/** The audit trail of one entity (newest first). */
export async function auditEntries(entities: string[], entityId: string | number, limit = 50): Promise<AuditRow[]> {
	const rows = await db().query<{ id: string; at: Date; actor: string; entity: string; action: string }>(
		`SELECT id, at, actor, entity, action FROM audit_entries WHERE entity IN (:entities) AND entity_id = :entityId ORDER BY at DESC, id DESC LIMIT :limit`,
		{ replacements: { entities, entityId: String(entityId), limit }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ id: Number(r.id), at: r.at.toISOString(), actor: r.actor, entity: r.entity, action: r.action }));
}

export type HistoryEntry = { version: number; createdAt: string; createdBy: string | null; note: string; changes: PlanChange[] };

export type ProductPage = { product: ProductRecord; lines: PlanLine[]; history: HistoryEntry[]; audit: AuditRow[] };

/** Everything the product page shows, or null for an unknown code. */
export async function productPage(code: string): Promise<ProductPage | null> {
	const product = await getProductByCode(code);
	if (!product) return null;
	const [versions, audit] = await Promise.all([planHistory(product.id), auditEntries(['plan', 'product'], product.id)]);
	const history = versions.map((v, i) => {
		const previous = versions[i + 1];
		return { version: v.version, createdAt: v.createdAt, createdBy: v.createdBy, note: v.note, changes: previous ? planDiff(previous.plan, v.plan) : [] };
	});
	return { product, lines: planLines(product.plan.plan), history, audit };
}

export type CalibrationStatus = { state: 'in-force' | 'expired' | 'none'; until: string | null };

function calibrationStatus(cal: CalibrationRecord | null, now: Date): CalibrationStatus {
	if (!cal) return { state: 'none', until: null };
	return { state: new Date(cal.validUntil) > now ? 'in-force' : 'expired', until: cal.validUntil };
}

export type StationListRow = StationRow & { calibration: CalibrationStatus };

/** The station list with each station's calibration state at `now`. */
export async function listStationsWithCalibration(now: Date): Promise<StationListRow[]> {
	const stations = await listStations();
	const cals = await Promise.all(stations.map((s) => latestCalibration(s.id)));
	return stations.map((s, i) => ({ ...s, calibration: calibrationStatus(cals[i] ?? null, now) }));
}

/** The names of the lines stations belong to (suggested when adding a station). */
export async function lineNames(): Promise<string[]> {
	const rows = await db().query<{ name: string }>('SELECT name FROM lines ORDER BY name', { type: QueryTypes.SELECT });
	return rows.map((r) => r.name);
}

export type StationPage = {
	station: StationRecord;
	calibration: CalibrationStatus;
	history: CalibrationRecord[];
	currentLot: LotRow | null;
	openLots: LotRow[];
	lines: string[];
	audit: AuditRow[];
};

/** Everything a station's page shows, or null for an unknown name. */
export async function stationPage(name: string, now: Date): Promise<StationPage | null> {
	const station = await getStationByName(name);
	if (!station) return null;
	const [history, lots, lines, audit] = await Promise.all([calibrationHistory(station.id), listLots(), lineNames(), auditEntries(['station', 'calibration'], station.id, 20)]);
	return {
		station,
		calibration: calibrationStatus(history[0] ?? null, now),
		history,
		currentLot: lots.find((l) => l.id === station.currentLotId) ?? null,
		openLots: lots.filter((l) => l.status === 'open'),
		lines,
		audit
	};
}

export type LotListRow = LotRow & { tested: number; passed: number; yieldPct: number | null };

/** The lot list with tested parts and yield per lot (production parts only), in one grouped query. */
export async function listLotsWithYield(): Promise<LotListRow[]> {
	const [lots, counts] = await Promise.all([
		listLots(),
		db().query<{ lot_id: string; tested: string; passed: string }>(
			// The ingest's per-lot bin counters: a few rows per lot, whatever the number of parts.
			`SELECT lot_id, sum(n) AS tested, coalesce(sum(n) FILTER (WHERE bin = 1), 0) AS passed FROM lot_bin_counts GROUP BY lot_id`,
			{ type: QueryTypes.SELECT }
		)
	]);
	const byLot = new Map(counts.map((c) => [Number(c.lot_id), { tested: Number(c.tested), passed: Number(c.passed) }]));
	return lots.map((l) => {
		const c = byLot.get(l.id) ?? { tested: 0, passed: 0 };
		return { ...l, ...c, yieldPct: c.tested ? (100 * c.passed) / c.tested : null };
	});
}

export type LotUnitLine = { serial: string; kind: string; station: string | null; testedAt: string; bin: number; pass: boolean; capacitancePF: (number | null)[] };

export type LotPage = {
	summary: NonNullable<Awaited<ReturnType<typeof lotSummary>>>;
	bins: { bin: number; label: string; count: number; pct: number }[];
	biasV: number[];
	total: number;
	units: LotUnitLine[];
};

/** A lot's summary, bins and its newest `limit` parts with C (pF) aligned to one set of bias columns. */
export async function lotPage(number: string, limit = 100): Promise<LotPage | null> {
	const summary = await lotSummary(number);
	if (!summary) return null;
	const page = await lotUnits(summary.lot.id, { limit, offset: 0 });
	const biasV = [...new Set(page.units.flatMap((u) => u.biasV))].sort((a, b) => a - b);
	const units = page.units.map((u) => ({
		serial: u.serial,
		kind: u.kind,
		station: u.station,
		testedAt: u.testedAt,
		bin: u.bin,
		pass: u.pass,
		capacitancePF: biasV.map((b) => {
			const c = u.capacitanceF[u.biasV.findIndex((x) => Math.abs(x - b) <= 1e-6)];
			return c === undefined || c === null ? null : c * 1e12;
		})
	}));
	// Bin names from the plan in force (a bin may have meant another category in an older version).
	const product = await getProductByCode(summary.lot.productCode);
	const binOf = { ...DEFAULT_BINS, ...(product?.plan.plan.bins ?? {}) };
	const names = new Map<number, string>([[GOOD_BIN, 'good']]);
	for (const c of BIN_CATEGORIES) names.set(binOf[c], names.has(binOf[c]) ? `${names.get(binOf[c])}, ${BIN_LABELS[c].toLowerCase()}` : BIN_LABELS[c].toLowerCase());
	const bins = Object.entries(summary.bins)
		.map(([bin, count]) => ({ bin: Number(bin), label: names.get(Number(bin)) ?? 'other', count, pct: summary.tested ? (100 * count) / summary.tested : 0 }))
		.sort((a, b) => a.bin - b.bin);
	return { summary, bins, biasV, total: page.total, units };
}
