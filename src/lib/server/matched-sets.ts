// Matched sets of a lot: built from its passing production parts with the matching domain
// ($lib/measure/matching), stored as a build with its sets (audited), read back with members.
import { QueryTypes } from 'sequelize';
import { formMatchedSets } from '$lib/measure/matching';
import { GOOD_BIN } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import { audit, type Actor } from './audit';
import { db } from './db';
import type { LotRecord } from './lots';

/** Most passing parts one build reads (about 2 s of matching; our bound). */
export const MAX_SET_PARTS = 50_000;

export type SetBuild = {
	id: number;
	setSize: number;
	tolerancePct: number;
	candidates: number;
	setCount: number;
	unmatched: number;
	builtAt: string;
	builtBy: string | null;
};
export type MatchedSetRow = { seq: number; spreadPct: number; members: { unitId: number; serial: string }[] };
export type LotSets = { build: SetBuild | null; sets: MatchedSetRow[] };

export type BuildResult = { ok: true; build: SetBuild } | { ok: false; status: 400 | 409; message: string };

/** Largest |c − mean| / mean over a set's members and points, in percent. */
export function setSpreadPct(vectors: number[][]): number {
	let worst = 0;
	const width = vectors[0]?.length ?? 0;
	for (let j = 0; j < width; j++) {
		const col = vectors.map((v) => v[j] ?? 0);
		const mean = col.reduce((a, b) => a + b, 0) / col.length;
		for (const c of col) worst = Math.max(worst, (100 * Math.abs(c - mean)) / mean);
	}
	return worst;
}

/** Sets of `setSize` within ±`tolerancePct` % from the lot's good parts, stored as a new build (the lot's current one). */
export async function buildMatchedSets(actor: Actor, lot: LotRecord, plan: SpecPlan, setSize: number, tolerancePct: number): Promise<BuildResult> {
	const [good] = await db().query<{ n: string }>('SELECT coalesce(sum(n), 0) AS n FROM lot_bin_counts WHERE lot_id = :lotId AND bin = :bin', {
		replacements: { lotId: lot.id, bin: GOOD_BIN },
		type: QueryTypes.SELECT
	});
	if (Number(good?.n ?? 0) > MAX_SET_PARTS) {
		return { ok: false, status: 409, message: `The lot has more than ${MAX_SET_PARTS.toLocaleString('en-US')} good parts: too many to match in one build` };
	}
	const rows = await db().query<{ id: string; bias_v: number[]; capacitance_f: (number | null)[] | null }>(
		`SELECT id, bias_v, capacitance_f FROM units WHERE lot_id = :lotId AND bin = :bin AND kind = 'production' ORDER BY id LIMIT :limit`,
		{ replacements: { lotId: lot.id, bin: GOOD_BIN, limit: MAX_SET_PARTS }, type: QueryTypes.SELECT }
	);
	const biases = plan.points.map((p) => p.biasV);
	const parts = rows.flatMap((r) => {
		const caps = biases.map((b) => {
			const i = r.bias_v.findIndex((v) => Math.abs(v - b) <= 1e-6);
			const c = i < 0 ? null : (r.capacitance_f?.[i] ?? null);
			return c !== null && Number.isFinite(c) && c > 0 ? c : null;
		});
		// A part measured at other points than the plan's (an older plan version) cannot be compared.
		return caps.every((c) => c !== null) ? [{ id: r.id, capacitanceF: caps as number[] }] : [];
	});
	const result = formMatchedSets(parts, setSize, tolerancePct);
	if (!result.ok) return { ok: false, status: 400, message: result.error.message };
	const byId = new Map(parts.map((p) => [p.id, p.capacitanceF]));
	const sets = result.sets.map((ids, i) => ({
		seq: i + 1,
		unit_ids: ids.map(Number),
		spread_pct: setSpreadPct(ids.map((id) => byId.get(id) ?? []))
	}));
	const buildId = await db().transaction(async (t) => {
		const [b] = await db().query<{ id: string }>(
			`INSERT INTO matched_set_builds (lot_id, set_size, tolerance_pct, candidates, set_count, unmatched, built_by)
			 VALUES (:lotId, :setSize, :tolerancePct, :candidates, :setCount, :unmatched, :by) RETURNING id`,
			{
				replacements: { lotId: lot.id, setSize, tolerancePct, candidates: parts.length, setCount: sets.length, unmatched: result.unmatched.length, by: actor.userId },
				type: QueryTypes.SELECT,
				transaction: t
			}
		);
		const id = Number(b?.id);
		if (sets.length) {
			await db().query(
				`INSERT INTO matched_sets (build_id, seq, unit_ids, spread_pct)
				 SELECT :id, seq, ARRAY(SELECT jsonb_array_elements_text(x.unit_ids)::bigint), spread_pct
				 FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(seq integer, unit_ids jsonb, spread_pct float8)`,
				{ replacements: { id, rows: JSON.stringify(sets) }, transaction: t }
			);
		}
		await audit(actor, 'lot', lot.number, 'matched-sets', null, { build: id, setSize, tolerancePct, candidates: parts.length, sets: sets.length, unmatched: result.unmatched.length }, t);
		return id;
	});
	const current = await lotSets(lot.id, { limit: 1, offset: 0 });
	if (!current.build || current.build.id !== buildId) throw new Error('matched-set build vanished after its insert');
	return { ok: true, build: current.build };
}

/** The lot's current (newest) build and a page of its sets with member serials, in set order. */
export async function lotSets(lotId: number, page: { limit: number; offset: number }): Promise<LotSets> {
	const builds = await db().query<{
		id: string;
		set_size: number;
		tolerance_pct: number;
		candidates: number;
		set_count: number;
		unmatched: number;
		built_at: Date;
		built_by: string | null;
	}>(
		`SELECT b.id, b.set_size, b.tolerance_pct, b.candidates, b.set_count, b.unmatched, b.built_at, u.name AS built_by
		 FROM matched_set_builds b LEFT JOIN users u ON u.id = b.built_by WHERE b.lot_id = :lotId ORDER BY b.id DESC LIMIT 1`,
		{ replacements: { lotId }, type: QueryTypes.SELECT }
	);
	const b = builds[0];
	if (!b) return { build: null, sets: [] };
	const build: SetBuild = {
		id: Number(b.id),
		setSize: b.set_size,
		tolerancePct: b.tolerance_pct,
		candidates: b.candidates,
		setCount: b.set_count,
		unmatched: b.unmatched,
		builtAt: b.built_at.toISOString(),
		builtBy: b.built_by
	};
	const rows = await db().query<{ seq: number; spread_pct: number; members: { unitId: string | number; serial: string }[] }>(
		`SELECT s.seq, s.spread_pct,
		        (SELECT json_agg(json_build_object('unitId', m.id, 'serial', u.serial) ORDER BY m.ord)
		         FROM unnest(s.unit_ids) WITH ORDINALITY AS m(id, ord) JOIN units u ON u.id = m.id) AS members
		 FROM matched_sets s WHERE s.build_id = :buildId ORDER BY s.seq LIMIT :limit OFFSET :offset`,
		{ replacements: { buildId: build.id, limit: page.limit, offset: page.offset }, type: QueryTypes.SELECT }
	);
	return {
		build,
		sets: rows.map((r) => ({ seq: r.seq, spreadPct: r.spread_pct, members: (r.members ?? []).map((m) => ({ unitId: Number(m.unitId), serial: m.serial })) }))
	};
}
