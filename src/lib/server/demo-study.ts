// The demo's finished gauge study, so the Studies page has something to show on a fresh start:
// ten parts of the released lot LT-26-1179 measured three times on A-01 and A-02 (Line A) after a
// socket change. Invented readings: each part's C(V) is the abrupt junction of KV-1405 scaled by a
// part factor, read with 0.08 % noise; A-02 reads 0.25 % high (its tank inductor is the one that
// creeps in the demo story). Judged by the same evaluateUnit as every post.
import { QueryTypes, type Transaction } from 'sequelize';
import { evaluateUnit } from '$lib/measure';
import type { SpecPlan } from '$lib/measure/types';
import { gauss as normal, prng } from '$lib/prng';
import { db } from './db';

const pF = 1e-12;
const junctionF = (v: number) => (40.0 * pF) / Math.sqrt(1 + v / 0.75) + 0.3 * pF;

type StationRow = { id: string; name: string; inductance_h: number; stray_f: number; blocking_f: number | null };

/** Inserts the finished study inside the demo's transaction. Assumes the demo's stations, lots and products exist. */
export async function seedDemoStudy(t: Transaction): Promise<void> {
	const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => db().query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction: t });
	const [product] = await q<{ id: string; version_id: string; plan: SpecPlan }>(
		"SELECT p.id, v.id AS version_id, v.plan FROM products p JOIN plan_versions v ON v.product_id = p.id WHERE p.code = 'KV-1405' ORDER BY v.version DESC LIMIT 1"
	);
	const [lot] = await q<{ id: string }>("SELECT id FROM lots WHERE number = 'LT-26-1179'");
	const [engineer] = await q<{ id: string }>("SELECT id FROM users WHERE email = 'noor.haddad@corvane.example'");
	const stations = await q<StationRow>("SELECT id, name, inductance_h, stray_f, blocking_f FROM stations WHERE name IN ('A-01', 'A-02') ORDER BY name");
	if (!product || !lot || stations.length !== 2) return;
	const finishedAt = new Date(Date.now() - 26 * 3600_000);
	const [study] = await q<{ id: string }>(
		`INSERT INTO studies (product_id, name, trials, multiplier, status, created_by, created_at, started_at, finished_at)
		 VALUES (:pid, 'Line A after socket change', 3, 6, 'finished', :by, :created, :started, :finished) RETURNING id`,
		{ pid: product.id, by: engineer?.id ?? null, created: new Date(finishedAt.getTime() - 3 * 3600_000), started: new Date(finishedAt.getTime() - 2 * 3600_000), finished: finishedAt }
	);
	const studyId = Number(study?.id);
	const serials = Array.from({ length: 10 }, (_, i) => `LT-26-1179-${String(40 + i * 37).padStart(6, '0')}`);
	const rand = prng(1179);
	const gauss = () => normal(rand);
	const partScale = serials.map((_, i) => 1 + (-0.03 + (0.06 * i) / 9) + 0.004 * gauss());
	for (const [i, serial] of serials.entries()) {
		await db().query('INSERT INTO study_parts (study_id, position, serial, lot_id) VALUES (:studyId, :i, :serial, :lot)', { replacements: { studyId, i, serial, lot: lot.id }, transaction: t });
	}
	for (const [i, s] of stations.entries()) {
		await db().query('INSERT INTO study_stations (study_id, position, station_id) VALUES (:studyId, :i, :sid)', { replacements: { studyId, i, sid: s.id }, transaction: t });
	}
	const biases = product.plan.points.map((p) => p.biasV);
	let minute = 0;
	for (let trial = 1; trial <= 3; trial++) {
		for (const s of stations) {
			const stationBias = s.name === 'A-02' ? 1.0025 : 1;
			for (const [i, serial] of serials.entries()) {
				minute++;
				const scale = (partScale[i] ?? 1) * stationBias;
				const points = biases.map((v) => {
					const part = junctionF(v) * scale * (1 + 0.0008 * gauss());
					const branch = s.blocking_f === null ? part : (part * s.blocking_f) / (part + s.blocking_f);
					const f = 1 / (2 * Math.PI * Math.sqrt(s.inductance_h * (s.stray_f + branch)));
					return { biasV: v, resonanceHz: f, bandwidthHz: f / 260 };
				});
				const e = evaluateUnit({
					arrangement: 'single',
					blockingF: s.blocking_f,
					calibration: { inductanceH: s.inductance_h, strayF: s.stray_f },
					plan: product.plan,
					unit: { points, leakageA: 2e-10, temperatureC: 24.5 }
				});
				if (!e.ok) continue;
				const testedAt = new Date(finishedAt.getTime() - (200 - minute) * 30_000);
				const [unit] = await q<{ id: string }>(
					`INSERT INTO units (lot_id, station_id, plan_version_id, serial, kind, tested_at, temperature_c, leakage_a, bin, pass, bias_v, resonance_hz, bandwidth_hz,
					   capacitance_f, q, cj0_f, vj_v, m, cp_f, fit_rms_pct, failures)
					 VALUES (:lot, :sid, :pv, :serial, 'study', :at, 24.5, 2e-10, :bin, :pass, CAST(:bias AS float8[]), CAST(:res AS float8[]), CAST(:bw AS float8[]),
					   CAST(:cap AS float8[]), CAST(:q AS float8[]), :cj0, :vj, :m, :cp, :rms, CAST(:failures AS jsonb)) RETURNING id`,
					{
						lot: lot.id, sid: s.id, pv: product.version_id, serial, at: testedAt, bin: e.bin, pass: e.pass,
						bias: `{${biases.join(',')}}`, res: `{${points.map((p) => p.resonanceHz).join(',')}}`, bw: `{${points.map((p) => p.bandwidthHz).join(',')}}`,
						cap: `{${e.capacitanceF.map((c) => c ?? 'NULL').join(',')}}`, q: e.q ? `{${e.q.map((x) => x ?? 'NULL').join(',')}}` : null,
						cj0: e.fit?.cj0F ?? null, vj: e.fit?.vjV ?? null, m: e.fit?.m ?? null, cp: e.fit?.cpF ?? null, rms: e.fit?.rmsPct ?? null,
						failures: JSON.stringify(e.failures.map(({ test, value, low, high }) => ({ test, value, low, high })))
					}
				);
				await db().query('INSERT INTO study_measurements (unit_id, study_id, serial, station_id, trial) VALUES (:uid, :studyId, :serial, :sid, :trial)', {
					replacements: { uid: unit?.id, studyId, serial, sid: s.id, trial },
					transaction: t
				});
			}
		}
	}
}
