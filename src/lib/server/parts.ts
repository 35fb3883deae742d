// One tested part: what was measured, how it was judged, with which plan and calibration.
import { QueryTypes } from 'sequelize';
import { capacitanceAtBiasF } from '$lib/measure/fit';
import { DEFAULT_BINS, GOOD_BIN } from '$lib/measure/spec';
import type { SpecPlan, SpecTestCategory } from '$lib/measure/types';
import { db } from './db';

export type PartDetail = {
	id: number;
	serial: string;
	kind: 'production' | 'reference' | 'bench' | 'study';
	source: string;
	lot: { number: string; productCode: string; productName: string };
	station: { name: string; line: string | null } | null;
	testedAt: string;
	receivedAt: string;
	temperatureC: number | null;
	leakageA: number | null;
	bin: number;
	binCategory: SpecTestCategory | 'good' | null;
	pass: boolean;
	failures: { test: string; value: number | null; low: number | null; high: number | null }[];
	sweep: { biasV: number; resonanceHz: number | null; bandwidthHz: number | null; capacitanceF: number | null; q: number | null }[];
	fit: { cj0F: number; vjV: number; m: number; cpF: number; rmsPct: number | null } | null;
	/** the fitted C(V) at 48 biases across the measured range (SI), for the plot */
	fitCurve: { biasV: number; capacitanceF: number }[];
	plan: { version: number; points: SpecPlan['points'] };
	calibration: { id: number; at: string; inductanceH: number; strayF: number; residualPpm: number } | null;
};

type Row = {
	id: string;
	serial: string;
	kind: PartDetail['kind'];
	source: string;
	number: string;
	code: string;
	product_name: string;
	station: string | null;
	line: string | null;
	tested_at: Date;
	received_at: Date;
	temperature_c: number | null;
	leakage_a: number | null;
	bin: number;
	pass: boolean;
	failures: PartDetail['failures'];
	bias_v: number[];
	resonance_hz: (number | null)[] | null;
	bandwidth_hz: (number | null)[] | null;
	capacitance_f: (number | null)[] | null;
	q: (number | null)[] | null;
	cj0_f: number | null;
	vj_v: number | null;
	m: number | null;
	cp_f: number | null;
	fit_rms_pct: number | null;
	version: number;
	plan: SpecPlan;
	cal_id: string | null;
	cal_at: Date | null;
	inductance_h: number | null;
	stray_f: number | null;
	residual_ppm: number | null;
};

/** The part with this id, or null. One indexed lookup by primary key plus its joins. */
export async function partDetail(id: number): Promise<PartDetail | null> {
	const rows = await db().query<Row>(
		`SELECT u.*, l.number, p.code, p.name AS product_name, s.name AS station, ln.name AS line, v.version, v.plan,
		   c.id AS cal_id, c.at AS cal_at, c.inductance_h, c.stray_f, c.residual_ppm
		 FROM units u JOIN lots l ON l.id = u.lot_id JOIN products p ON p.id = l.product_id JOIN plan_versions v ON v.id = u.plan_version_id
		 LEFT JOIN stations s ON s.id = u.station_id LEFT JOIN lines ln ON ln.id = s.line_id LEFT JOIN calibrations c ON c.id = u.calibration_id
		 WHERE u.id = :id`,
		{ replacements: { id }, type: QueryTypes.SELECT }
	);
	const r = rows[0];
	if (!r) return null;
	const fit = r.cj0_f !== null && r.vj_v !== null && r.m !== null && r.cp_f !== null ? { cj0F: r.cj0_f, vjV: r.vj_v, m: r.m, cpF: r.cp_f, rmsPct: r.fit_rms_pct } : null;
	const bins = { ...DEFAULT_BINS, ...(r.plan.bins ?? {}) };
	const category = r.bin === GOOD_BIN ? 'good' : ((Object.keys(bins) as SpecTestCategory[]).find((k) => bins[k] === r.bin) ?? null);
	return {
		id: Number(r.id),
		serial: r.serial,
		kind: r.kind,
		source: r.source,
		lot: { number: r.number, productCode: r.code, productName: r.product_name },
		station: r.station ? { name: r.station, line: r.line } : null,
		testedAt: r.tested_at.toISOString(),
		receivedAt: r.received_at.toISOString(),
		temperatureC: r.temperature_c,
		leakageA: r.leakage_a,
		bin: r.bin,
		binCategory: category,
		pass: r.pass,
		failures: r.failures,
		sweep: r.bias_v.map((v, i) => ({
			biasV: v,
			resonanceHz: r.resonance_hz?.[i] ?? null,
			bandwidthHz: r.bandwidth_hz?.[i] ?? null,
			capacitanceF: r.capacitance_f?.[i] ?? null,
			q: r.q?.[i] ?? null
		})),
		fit,
		fitCurve: fit ? fittedCurve(fit, r.bias_v) : [],
		plan: { version: r.version, points: r.plan.points },
		calibration:
			r.cal_id !== null && r.cal_at && r.inductance_h !== null && r.stray_f !== null
				? { id: Number(r.cal_id), at: r.cal_at.toISOString(), inductanceH: r.inductance_h, strayF: r.stray_f, residualPpm: r.residual_ppm ?? 0 }
				: null
	};
}

function fittedCurve(fit: { cj0F: number; vjV: number; m: number; cpF: number }, biases: number[]): { biasV: number; capacitanceF: number }[] {
	if (biases.length === 0) return [];
	const lo = Math.min(...biases);
	const hi = Math.max(...biases);
	const out: { biasV: number; capacitanceF: number }[] = [];
	for (let i = 0; i < 48; i++) {
		const v = lo + ((hi - lo) * i) / 47;
		const c = capacitanceAtBiasF(fit, v);
		if (c.ok) out.push({ biasV: v, capacitanceF: c.capacitanceF });
	}
	return out;
}

export type PartHit = { id: number; serial: string; lot: string; kind: PartDetail['kind']; source: string; testedAt: string; bin: number; pass: boolean };

/** Parts with this exact serial (a retest gives several), newest first; uses units_serial_idx. */
export async function partsBySerial(serial: string, limit = 20): Promise<PartHit[]> {
	const rows = await db().query<{ id: string; serial: string; number: string; kind: PartDetail['kind']; source: string; tested_at: Date; bin: number; pass: boolean }>(
		`SELECT u.id, u.serial, l.number, u.kind, u.source, u.tested_at, u.bin, u.pass FROM units u JOIN lots l ON l.id = u.lot_id
		 WHERE u.serial = :serial ORDER BY u.id DESC LIMIT :limit`,
		{ replacements: { serial, limit }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ id: Number(r.id), serial: r.serial, lot: r.number, kind: r.kind, source: r.source, testedAt: r.tested_at.toISOString(), bin: r.bin, pass: r.pass }));
}
