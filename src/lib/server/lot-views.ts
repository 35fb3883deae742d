// Read models of the lot page: the parts table (keyset paging over indexes), a C–V sample, and
// per-characteristic values with histogram classes and capability. Plain objects out.
import { QueryTypes } from 'sequelize';
import { histogramClasses, type HistogramClass } from '$lib/components/charts/histogram';
import { DEFAULT_BINS, GOOD_BIN } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import { BIN_CATEGORIES, BIN_LABELS } from '$lib/schemas/plan-form';
import { encodeCursor, PARTS_PAGE_SIZE, type CursorValue, type PartsQueryValue } from '$lib/schemas/lots';
import { capability, type CapabilityReport } from '$lib/spc/capability';
import { db } from './db';
import { lotSummary, type LotRecord } from './lots';
import { lotSets } from './matched-sets';
import { getProductByCode } from './products';
import { auditEntries } from './setup-views';

/** Bin number → name under a plan ("good", "capacitance", …; a bin shared by categories lists them). */
export function binNames(plan: SpecPlan): Map<number, string> {
	const binOf = { ...DEFAULT_BINS, ...(plan.bins ?? {}) };
	const names = new Map<number, string>([[GOOD_BIN, 'good']]);
	for (const c of BIN_CATEGORIES) {
		const prev = names.get(binOf[c]);
		names.set(binOf[c], prev ? `${prev}, ${BIN_LABELS[c].toLowerCase()}` : BIN_LABELS[c].toLowerCase());
	}
	return names;
}

const sameBias = (a: number, b: number) => Math.abs(a - b) <= 1e-6;

/**
 * One lot's parts in id order through units_lot_idx (lot_id, id). The lot is written as a range
 * (lot_id >= :lotId AND lot_id <= :lotId) and the order as (lot_id, id): with `lot_id = :lotId`
 * the planner drops lot_id from the order and may walk the primary key instead, filtering on
 * lot_id, which reads every part of the other lots stored before (or after) this one first
 * (0.3–0.5 s past 1.5 M of them on a scratch table, more with full rows). Only units_lot_idx
 * gives this order, so it is used.
 */
const LOT_RANGE = 'u.lot_id >= :lotId AND u.lot_id <= :lotId';

/**
 * A one-dimensional float8[] in PostgreSQL's text form ("{1,2.5,NULL,NaN}") as numbers; null for
 * SQL NULL. Reading thousands of arrays this way is several times faster than the driver's
 * general array parser, and gives the same doubles (float8 text is exact in PostgreSQL 12+).
 */
export function parseFloatArray(text: string | null): (number | null)[] | null {
	if (text === null) return null;
	const inner = text.trim().slice(1, -1);
	if (!inner) return [];
	return inner.split(',').map((t) => (t === 'NULL' ? null : Number(t)));
}

/** The capacitance (F) of a part at a bias, or null when not measured there. */
function capacitanceAt(biasV: number[], capacitanceF: (number | null)[], at: number): number | null {
	const i = biasV.findIndex((v) => sameBias(v, at));
	const c = i < 0 ? undefined : capacitanceF[i];
	return c === undefined || c === null || !Number.isFinite(c) ? null : c;
}

export type PartRow = {
	id: number;
	serial: string;
	kind: string;
	station: string | null;
	testedAt: string;
	bin: number;
	pass: boolean;
	/** Capacitance (F) at each plan point, in plan order; null where not measured. */
	capacitanceF: (number | null)[];
};

export type PartsPage = {
	rows: PartRow[];
	/** Cursor of the next page (continue after the last row), of the previous one (before the first). */
	next: string | null;
	prev: string | null;
	/** Parts matching the filters; exact, or a lower bound when `totalCapped`. Null for an unknown station. */
	total: number;
	totalCapped: boolean;
	unknownStation: boolean;
};

/** Counting more than this many parts for a filtered view stops there ("10 000+"): our bound on the cost. */
export const COUNT_CAP = 10_000;

type SortSql = { expr: string; cast: string; fromCursor: (v: CursorValue['value']) => unknown; toCursor: (r: DbPart) => CursorValue['value'] };

function sortSql(sort: PartsQueryValue['sort']): SortSql {
	switch (sort) {
		case 'serial':
			return { expr: 'u.serial', cast: 'text', fromCursor: (v) => String(v ?? ''), toCursor: (r) => r.serial };
		case 'tested':
			return { expr: 'u.tested_at', cast: 'timestamptz', fromCursor: (v) => String(v ?? ''), toCursor: (r) => r.tested_at.toISOString() };
		case 'bin':
			return { expr: 'u.bin', cast: 'smallint', fromCursor: (v) => Number(v ?? 0), toCursor: (r) => r.bin };
		case 'station':
			return { expr: 'coalesce(u.station_id, 0)', cast: 'bigint', fromCursor: (v) => Number(v ?? 0), toCursor: (r) => Number(r.station_id ?? 0) };
		default: {
			// c1…c20: the capacitance at that position of the sweep; NaN (unmeasured) sorts above every number in PostgreSQL.
			const n = Number(sort.slice(1));
			return {
				expr: `coalesce(u.capacitance_f[${n}], 'NaN'::float8)`,
				cast: 'float8',
				fromCursor: (v) => (typeof v === 'number' ? v : 'NaN'),
				toCursor: (r) => {
					const c = r.capacitance_f?.[n - 1];
					return c === undefined || c === null || !Number.isFinite(c) ? null : c;
				}
			};
		}
	}
}

type DbPart = {
	id: string;
	serial: string;
	kind: string;
	station_id: string | null;
	station: string | null;
	tested_at: Date;
	bin: number;
	pass: boolean;
	bias_v: number[];
	capacitance_f: (number | null)[] | null;
};

/** Exact totals from the ingest's per-lot bin counters (production parts), when the filters allow. */
async function countedTotal(lotId: number, q: PartsQueryValue): Promise<number | null> {
	if (q.kind !== 'production' || q.station || q.serial) return null;
	const rows = await db().query<{ bin: number; n: string }>('SELECT bin, sum(n) AS n FROM lot_bin_counts WHERE lot_id = :lotId GROUP BY bin', {
		replacements: { lotId },
		type: QueryTypes.SELECT
	});
	return rows
		.filter((r) => (q.bin === undefined || r.bin === q.bin) && (q.result === undefined || (q.result === 'pass') === (r.bin === GOOD_BIN)))
		.reduce((s, r) => s + Number(r.n), 0);
}

/**
 * One page of a lot's parts, sorted and filtered, by keyset: `after` continues past a row,
 * `before` goes back before one; each page reads PARTS_PAGE_SIZE + 1 rows from an index range.
 * `planBiasV` gives the table's capacitance columns.
 */
export async function lotParts(lot: LotRecord, planBiasV: number[], q: PartsQueryValue): Promise<PartsPage> {
	let stationId: number | null = null;
	if (q.station) {
		const st = await db().query<{ id: string }>('SELECT id FROM stations WHERE name = :name', { replacements: { name: q.station }, type: QueryTypes.SELECT });
		if (!st[0]) return { rows: [], next: null, prev: null, total: 0, totalCapped: false, unknownStation: true };
		stationId = Number(st[0].id);
	}
	const s = sortSql(q.sort);
	const where = ['u.lot_id = :lotId'];
	const replacements: Record<string, unknown> = { lotId: lot.id, limit: PARTS_PAGE_SIZE + 1 };
	if (q.kind !== 'all') (where.push('u.kind = :kind'), (replacements.kind = q.kind));
	if (q.bin !== undefined) (where.push('u.bin = :bin'), (replacements.bin = q.bin));
	if (q.result) (where.push('u.pass = :pass'), (replacements.pass = q.result === 'pass'));
	if (stationId !== null) (where.push('u.station_id = :stationId'), (replacements.stationId = stationId));
	if (q.serial) {
		// The range lets the (lot_id, serial, id) index start at the prefix; it assumes code-point
		// collation (the private cluster is C.UTF-8), and starts_with keeps the answer exact anyway.
		where.push('u.serial >= :prefix AND u.serial < :prefixEnd AND starts_with(u.serial, :prefix)');
		replacements.prefix = q.serial;
		replacements.prefixEnd = `${q.serial}\u{10FFFF}`;
	}
	const filterWhere = where.join(' AND ');
	const cursor = q.after ?? q.before;
	const backwards = q.before !== undefined;
	const ascending = (q.dir === 'asc') !== backwards;
	if (cursor) {
		where.push(`(${s.expr}, u.id) ${ascending ? '>' : '<'} (CAST(:cv AS ${s.cast}), :cid)`);
		replacements.cv = s.fromCursor(cursor.value);
		replacements.cid = cursor.id;
	}
	const order = ascending ? 'ASC' : 'DESC';
	const rows = await db().query<DbPart>(
		`SELECT u.id, u.serial, u.kind, u.station_id, s.name AS station, u.tested_at, u.bin, u.pass, u.bias_v, u.capacitance_f
		 FROM units u LEFT JOIN stations s ON s.id = u.station_id
		 WHERE ${where.join(' AND ')}
		 ORDER BY ${s.expr} ${order}, u.id ${order} LIMIT :limit`,
		{ replacements, type: QueryTypes.SELECT }
	);
	const more = rows.length > PARTS_PAGE_SIZE;
	const page = rows.slice(0, PARTS_PAGE_SIZE);
	if (backwards) page.reverse();
	const first = page[0];
	const last = page[page.length - 1];
	const cur = (r: DbPart | undefined) => (r ? encodeCursor({ value: s.toCursor(r), id: Number(r.id) }) : null);
	const next = backwards ? cur(last) : more ? cur(last) : null;
	const prev = backwards ? (more ? cur(first) : null) : q.after ? cur(first) : null;

	let total = await countedTotal(lot.id, q);
	let totalCapped = false;
	if (total === null) {
		const [c] = await db().query<{ n: string }>(`SELECT count(*) AS n FROM (SELECT 1 FROM units u WHERE ${filterWhere} LIMIT ${COUNT_CAP + 1}) x`, {
			replacements,
			type: QueryTypes.SELECT
		});
		total = Math.min(Number(c?.n ?? 0), COUNT_CAP);
		totalCapped = Number(c?.n ?? 0) > COUNT_CAP;
	}
	return {
		rows: page.map((r) => ({
			id: Number(r.id),
			serial: r.serial,
			kind: r.kind,
			station: r.station,
			testedAt: r.tested_at.toISOString(),
			bin: r.bin,
			pass: r.pass,
			capacitanceF: planBiasV.map((b) => capacitanceAt(r.bias_v, r.capacitance_f ?? [], b))
		})),
		next: page.length ? next : null,
		prev: page.length ? prev : null,
		total,
		totalCapped,
		unknownStation: false
	};
}

export type CvSampleCurve = { id: string; unitId: number; biasV: number[]; capacitancePf: (number | null)[]; pass: boolean };

/**
 * Up to `n` production parts spread evenly over the lot's id range (≈ its test order): one index
 * probe per sample point through units_lot_idx, whatever the lot's size.
 */
export async function lotCvSample(lotId: number, n = 50): Promise<CvSampleCurve[]> {
	const rows = await db().query<{ id: string; serial: string; pass: boolean; bias_v: number[]; capacitance_f: (number | null)[] | null }>(
		`WITH r AS (
		   SELECT (SELECT u.id FROM units u WHERE ${LOT_RANGE} AND u.kind = 'production' ORDER BY u.lot_id, u.id LIMIT 1) AS lo,
		          (SELECT u.id FROM units u WHERE ${LOT_RANGE} AND u.kind = 'production' ORDER BY u.lot_id DESC, u.id DESC LIMIT 1) AS hi)
		 SELECT DISTINCT ON (s.id) s.id, s.serial, s.pass, s.bias_v, s.capacitance_f
		 FROM r CROSS JOIN generate_series(0, :n - 1) AS g(i)
		 CROSS JOIN LATERAL (
		   SELECT u.id, u.serial, u.pass, u.bias_v, u.capacitance_f FROM units u
		   WHERE (u.lot_id, u.id) >= (:lotId, r.lo + ((r.hi - r.lo) * g.i) / greatest(:n - 1, 1)) AND u.lot_id <= :lotId AND u.kind = 'production'
		   ORDER BY u.lot_id, u.id LIMIT 1) s
		 WHERE r.lo IS NOT NULL
		 ORDER BY s.id`,
		{ replacements: { lotId, n }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({
		id: r.serial,
		unitId: Number(r.id),
		biasV: r.bias_v,
		capacitancePf: r.bias_v.map((_, i) => {
			const c = r.capacitance_f?.[i];
			return c === undefined || c === null || !Number.isFinite(c) ? null : c * 1e12;
		}),
		pass: r.pass
	}));
}

export type Characteristic = {
	key: string;
	label: string;
	unit: string;
	lsl: number | null;
	usl: number | null;
	n: number;
	mean: number | null;
	classes: HistogramClass[];
	capability: CapabilityReport | null;
	note: string | null;
};

/** Parts read for histograms and capability: the newest ones, the whole lot when smaller (our bound). */
export const CHARACTERISTIC_PARTS = 10_000;

export type LotCharacteristics = { characteristics: Characteristic[]; parts: number };

/** Lots whose characteristics are kept (the most recently computed ones); our bound. */
export const CHARACTERISTICS_CACHE_LOTS = 16;
const characteristicsCache = new Map<number, { key: string; value: LotCharacteristics }>();

/**
 * The cached characteristics of a lot when `key` still describes it, else null. The key holds
 * everything they depend on: the plan, the lot's production bin counts (every new part adds to
 * them) and whether an alarm is open.
 */
function cachedCharacteristics(lotId: number, key: string): LotCharacteristics | null {
	const hit = characteristicsCache.get(lotId);
	if (!hit || hit.key !== key) return null;
	characteristicsCache.delete(lotId);
	characteristicsCache.set(lotId, hit);
	return hit.value;
}

function keepCharacteristics(lotId: number, key: string, value: LotCharacteristics): void {
	characteristicsCache.delete(lotId);
	characteristicsCache.set(lotId, { key, value });
	for (const old of characteristicsCache.keys()) {
		if (characteristicsCache.size <= CHARACTERISTICS_CACHE_LOTS) break;
		characteristicsCache.delete(old);
	}
}

/**
 * Each charted characteristic of the lot's production parts (the capacitance at every plan point
 * in pF, and the ratio when the plan has one): histogram classes and capability against the
 * plan's limits, in test order. The process counts as in control when the lot has no open alarm.
 *
 * With `binCounts` (the lot's production bin counts, read before this call) the answer is kept
 * and reused while the plan, the counts and the alarm state are unchanged: a repeat load of an
 * unchanged lot skips reading its parts, and a new part (a new count) reads them again. The
 * counts must be read first: parts stored after them only make the kept answer newer than its key.
 */
export async function lotCharacteristics(lotId: number, plan: SpecPlan, binCounts?: Record<string, number>): Promise<LotCharacteristics> {
	const alarms = await db().query<{ n: string }>("SELECT count(*) AS n FROM alarms WHERE lot_id = :lotId AND status <> 'closed'", {
		replacements: { lotId },
		type: QueryTypes.SELECT
	});
	const inControl = Number(alarms[0]?.n ?? 0) === 0;
	const key = binCounts ? JSON.stringify({ plan, binCounts, inControl }) : null;
	const cached = key === null ? null : cachedCharacteristics(lotId, key);
	if (cached) return cached;
	const value = await computeCharacteristics(lotId, plan, inControl);
	if (key !== null) keepCharacteristics(lotId, key, value);
	return value;
}

async function computeCharacteristics(lotId: number, plan: SpecPlan, inControl: boolean): Promise<LotCharacteristics> {
	// The arrays as text, parsed by parseFloatArray (10 000 parts: ~100 ms less than the driver's parser).
	const rows = await db().query<{ bias_v: string; capacitance_f: string | null }>(
		`SELECT CAST(bias_v AS text) AS bias_v, CAST(capacitance_f AS text) AS capacitance_f FROM (
		   SELECT u.id, u.bias_v, u.capacitance_f FROM units u WHERE ${LOT_RANGE} AND u.kind = 'production'
		   ORDER BY u.lot_id DESC, u.id DESC LIMIT :limit) x
		 ORDER BY id`,
		{ replacements: { lotId, limit: CHARACTERISTIC_PARTS }, type: QueryTypes.SELECT }
	);
	const series: { key: string; label: string; unit: string; lsl: number | null; usl: number | null; values: number[] }[] = plan.points.map((p) => ({
		key: `C@${p.biasV}V`,
		label: `C at ${p.biasV} V`,
		unit: 'pF',
		lsl: p.minF === undefined ? null : p.minF * 1e12,
		usl: p.maxF === undefined ? null : p.maxF * 1e12,
		values: []
	}));
	const ratio = plan.ratio;
	const ratioSeries = ratio
		? { key: 'ratio', label: `Ratio C(${ratio.lowBiasV} V) / C(${ratio.highBiasV} V)`, unit: '', lsl: ratio.min ?? null, usl: ratio.max ?? null, values: [] as number[] }
		: null;
	for (const row of rows) {
		const r = { bias_v: (parseFloatArray(row.bias_v) ?? []) as number[], capacitance_f: parseFloatArray(row.capacitance_f) };
		const caps = r.capacitance_f ?? [];
		plan.points.forEach((p, i) => {
			const c = capacitanceAt(r.bias_v, caps, p.biasV);
			if (c !== null) series[i]?.values.push(c * 1e12);
		});
		if (ratio && ratioSeries) {
			const lo = capacitanceAt(r.bias_v, caps, ratio.lowBiasV);
			const hi = capacitanceAt(r.bias_v, caps, ratio.highBiasV);
			if (lo !== null && hi !== null && hi > 0) ratioSeries.values.push(lo / hi);
		}
	}
	const all = ratioSeries ? [...series, ratioSeries] : series;
	const characteristics = all.map((c): Characteristic => {
		const spec = { ...(c.lsl === null ? {} : { lowerSpecLimit: c.lsl }), ...(c.usl === null ? {} : { upperSpecLimit: c.usl }) };
		const hasSpec = c.lsl !== null || c.usl !== null;
		const mean = c.values.length ? c.values.reduce((a, v) => a + v, 0) / c.values.length : null;
		// Spread below a part in 10⁹ of the mean is rounding, not variation: the indices would be astronomical.
		const spread = mean === null || c.values.length < 2 ? 0 : Math.sqrt(c.values.reduce((a, v) => a + (v - mean) ** 2, 0) / (c.values.length - 1));
		const flat = mean !== null && c.values.length >= 2 && spread <= 1e-9 * Math.abs(mean);
		const cap = hasSpec && c.values.length >= 2 && !flat ? capability(c.values, spec, { processInControl: inControl }) : null;
		return {
			key: c.key,
			label: c.label,
			unit: c.unit,
			lsl: c.lsl,
			usl: c.usl,
			n: c.values.length,
			mean,
			classes: histogramClasses(c.values),
			capability: cap?.ok ? cap.value : null,
			note: !hasSpec
				? 'No spec limits for this characteristic'
				: flat
					? 'No measurable spread: every part has the same value'
					: cap && !cap.ok
						? cap.error.message
						: cap
							? null
							: 'Too few parts'
		};
	});
	return { characteristics, parts: rows.length };
}

export type LotPageView = NonNullable<Awaited<ReturnType<typeof lotPageView>>>;

/** Everything the lot page shows for one parts-table query; null for an unknown lot. */
export async function lotPageView(number: string, q: PartsQueryValue) {
	const summary = await lotSummary(number);
	if (!summary) return null;
	const product = await getProductByCode(summary.lot.productCode);
	if (!product) return null;
	const plan = product.plan.plan;
	const planBiasV = plan.points.map((p) => p.biasV);
	const names = binNames(plan);
	const bins = Object.entries(summary.bins)
		.map(([bin, count]) => ({ bin: Number(bin), label: names.get(Number(bin)) ?? 'other', count, pct: summary.tested ? (100 * count) / summary.tested : 0 }))
		.sort((a, b) => a.bin - b.bin);
	const [parts, sample, chars, sets, audit] = await Promise.all([
		lotParts(summary.lot, planBiasV, q),
		lotCvSample(summary.lot.id),
		lotCharacteristics(summary.lot.id, plan, summary.bins),
		lotSets(summary.lot.id, { limit: 100, offset: 0 }),
		auditEntries(['lot'], summary.lot.number, 20)
	]);
	return {
		summary,
		product: { code: product.code, name: product.name, planVersion: product.plan.version },
		bins,
		points: plan.points.map((p, i) => ({ key: `c${i + 1}`, biasV: p.biasV })),
		windows: plan.points.map((p) => ({ biasV: p.biasV, lowPf: p.minF === undefined ? null : p.minF * 1e12, highPf: p.maxF === undefined ? null : p.maxF * 1e12 })),
		matchingDefaults: { setSize: plan.matching?.setSize ?? 2, tolerancePct: plan.matching?.tolerancePct ?? 1, fromPlan: plan.matching !== undefined },
		parts,
		sample,
		characteristics: chars.characteristics,
		characteristicParts: chars.parts,
		sets,
		audit
	};
}
