// The demo scenario: Corvane Semiconductor, an invented maker of tuning varactors, with two
// product families, two lines, six stations, four lots and one person of each role.
// Seeded once per database (meta key 'demo-seeded'); a later issue's simulator makes it live.
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { QueryTypes, type Transaction } from 'sequelize';
import { sha256 } from './auth';
import { db } from './db';
import { seedDemoStudy } from './demo-study';
import { hashPassword } from './passwords';

export const DEMO_PASSWORD = 'biasline-demo';

export const DEMO_PEOPLE = [
	{ email: 'noor.haddad@corvane.example', name: 'Noor Haddad', role: 'engineer' },
	{ email: 'tomas.brandt@corvane.example', name: 'Tomas Brandt', role: 'operator' },
	{ email: 'lena.sorvik@corvane.example', name: 'Lena Sorvik', role: 'operator' }
] as const;

const pF = 1e-12;

// Plans in SI units (the API contract's shape). Limits sit about ±7 % around the nominal curve of
// each family's junction model (KV-1405: Cj0 40 pF, Vj 0.75 V, M 0.5, Cp 0.3 pF; KV-2210H:
// Cj0 480 pF, Vj 1.6 V, M 1.9, Cp 1.2 pF) — invented parts with plausible numbers.
export const DEMO_PRODUCTS = [
	{
		code: 'KV-1405',
		name: 'Abrupt-junction varactor, 26 pF at 1 V',
		family: 'abrupt',
		plan: {
			points: [
				{ biasV: 1, minF: 24.6 * pF, maxF: 28.4 * pF },
				{ biasV: 2 },
				{ biasV: 4, minF: 15.0 * pF, maxF: 17.4 * pF },
				{ biasV: 8 },
				{ biasV: 15 },
				{ biasV: 25, minF: 6.6 * pF, maxF: 7.7 * pF }
			],
			ratio: { lowBiasV: 1, highBiasV: 25, min: 3.4, max: 4.1 },
			q: { biasV: 4, min: 150 },
			leakage: { biasV: 25, maxA: 1e-8 },
			fit: { maxRmsPct: 1.5 },
			matching: { setSize: 2, tolerancePct: 2.0 },
			spc: { baselineParts: 30 }
		}
	},
	{
		code: 'KV-2210H',
		name: 'Hyperabrupt tuning varactor, 192 pF at 1 V, ratio 11',
		family: 'hyperabrupt',
		plan: {
			points: [
				{ biasV: 1, minF: 180 * pF, maxF: 204 * pF },
				{ biasV: 2 },
				{ biasV: 3 },
				{ biasV: 4, minF: 42.4 * pF, maxF: 48.8 * pF },
				{ biasV: 5 },
				{ biasV: 6 },
				{ biasV: 7 },
				{ biasV: 8, minF: 15.9 * pF, maxF: 18.4 * pF }
			],
			ratio: { lowBiasV: 1, highBiasV: 8, min: 10.0, max: 12.5 },
			q: { biasV: 1, min: 80 },
			leakage: { biasV: 8, maxA: 2e-8 },
			fit: { maxRmsPct: 2.0 },
			matching: { setSize: 3, tolerancePct: 1.5 },
			spc: { baselineParts: 30 }
		}
	}
] as const;

export const DEMO_LINES = [
	{ name: 'Line A', description: 'Final test, Halden works' },
	{ name: 'Line B', description: 'Incoming screen, Halden works' }
] as const;

// Each station starts with a lot loaded (the abrupt part on 100 µH tanks, the hyperabrupt part,
// a few hundred pF, on 10 µH tanks so both resonate in the low megahertz).
export const DEMO_STATIONS = [
	{ name: 'A-01', line: 'Line A', inductanceH: 100e-6, strayF: 3.2 * pF, blockingF: 100e-9, arrangement: 'single', lot: 'LT-26-1187' },
	{ name: 'A-02', line: 'Line A', inductanceH: 100e-6, strayF: 2.9 * pF, blockingF: 100e-9, arrangement: 'single', lot: 'LT-26-1187' },
	{ name: 'A-03', line: 'Line A', inductanceH: 10e-6, strayF: 4.1 * pF, blockingF: null, arrangement: 'antiseries2', lot: 'LT-26-2204' },
	{ name: 'B-01', line: 'Line B', inductanceH: 10e-6, strayF: 3.6 * pF, blockingF: 100e-9, arrangement: 'single', lot: 'LT-26-2204' },
	{ name: 'B-02', line: 'Line B', inductanceH: 10e-6, strayF: 3.3 * pF, blockingF: 100e-9, arrangement: 'single', lot: 'LT-26-2204' },
	{ name: 'B-03', line: 'Line B', inductanceH: 100e-6, strayF: 5.0 * pF, blockingF: 47e-9, arrangement: 'parallel2', lot: 'LT-26-1187' }
] as const;

export const DEMO_LOTS = [
	{ number: 'LT-26-1187', product: 'KV-1405', quantity: 5000, status: 'open', disposition: 'pending' },
	{ number: 'LT-26-1179', product: 'KV-1405', quantity: 4800, status: 'closed', disposition: 'released' },
	{ number: 'LT-26-2204', product: 'KV-2210H', quantity: 2000, status: 'open', disposition: 'pending' },
	{ number: 'LT-26-2198', product: 'KV-2210H', quantity: 2400, status: 'closed', disposition: 'held' }
] as const;

async function one<T extends object>(sql: string, replacements: Record<string, unknown>, transaction: Transaction): Promise<T> {
	const rows = await db().query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction });
	const row = rows[0];
	if (!row) throw new Error(`no row from: ${sql}`);
	return row;
}

/**
 * Seeds the scenario once. Station tokens are random; they are written to
 * `<dataDir>/demo-station-tokens.json` (mode 600) for the demo's simulated stations.
 */
export async function seedDemo(dataDir: string): Promise<boolean> {
	const done = await db().query("SELECT 1 FROM meta WHERE key = 'demo-seeded'", { type: QueryTypes.SELECT });
	if (done.length > 0) return false;
	const hash = await hashPassword(DEMO_PASSWORD);
	const tokens: { name: string; token: string; line: string; lot: string; product: string }[] = [];
	await db().transaction(async (t) => {
		for (const p of DEMO_PEOPLE) {
			await db().query(
				`INSERT INTO users (email, name, role, password_hash) VALUES (:email, :name, :role, :hash)
				 ON CONFLICT DO NOTHING`,
				{ replacements: { ...p, hash }, transaction: t }
			);
		}
		const lineIds = new Map<string, number>();
		for (const l of DEMO_LINES) {
			const row = await one<{ id: string }>('INSERT INTO lines (name, description) VALUES (:name, :description) RETURNING id', l, t);
			lineIds.set(l.name, Number(row.id));
		}
		const productIds = new Map<string, number>();
		for (const p of DEMO_PRODUCTS) {
			const row = await one<{ id: string }>(
				'INSERT INTO products (code, name, family) VALUES (:code, :name, :family) RETURNING id',
				{ code: p.code, name: p.name, family: p.family },
				t
			);
			productIds.set(p.code, Number(row.id));
			await db().query(
				"INSERT INTO plan_versions (product_id, version, plan, note) VALUES (:id, 1, :plan, 'Initial plan (demo scenario)')",
				{ replacements: { id: row.id, plan: JSON.stringify(p.plan) }, transaction: t }
			);
		}
		for (const s of DEMO_STATIONS) {
			// Station tokens are 32 random bytes, so a fast hash is enough (no dictionary to guess from).
			const token = `bst_${randomBytes(24).toString('base64url')}`;
			const product = DEMO_LOTS.find((l) => l.number === s.lot)?.product ?? '';
			tokens.push({ name: s.name, token, line: s.line, lot: s.lot, product });
			await db().query(
				`INSERT INTO stations (name, line_id, inductance_h, stray_f, blocking_f, arrangement, token_hash, token_hint, token_issued_at)
				 VALUES (:name, :lineId, :l, :stray, :blocking, :arrangement, :hash, :hint, now())`,
				{
					replacements: {
						name: s.name,
						lineId: lineIds.get(s.line) ?? null,
						l: s.inductanceH,
						stray: s.strayF,
						blocking: s.blockingF,
						arrangement: s.arrangement,
						hash: sha256(token),
						hint: token.slice(-4)
					},
					transaction: t
				}
			);
		}
		for (const lot of DEMO_LOTS) {
			await db().query(
				`INSERT INTO lots (number, product_id, quantity, status, disposition, closed_at)
				 VALUES (:number, :productId, :quantity, :status, :disposition, CASE WHEN :status = 'closed' THEN now() ELSE NULL END)`,
				{ replacements: { ...lot, productId: productIds.get(lot.product) }, transaction: t }
			);
		}
		for (const s of DEMO_STATIONS) {
			await db().query('UPDATE stations SET current_lot_id = (SELECT id FROM lots WHERE number = :lot) WHERE name = :name', {
				replacements: { lot: s.lot, name: s.name },
				transaction: t
			});
		}
		// The engineer follows Line A, with a 15-minute digest, so the demo's alarms reach the outbox.
		await db().query(
			`INSERT INTO subscriptions (user_id, scope, line_id) SELECT u.id, 'line', l.id FROM users u, lines l
			 WHERE u.email = 'noor.haddad@corvane.example' AND l.name = 'Line A'`,
			{ transaction: t }
		);
		await db().query("UPDATE users SET alarm_digest_minutes = 15 WHERE email = 'noor.haddad@corvane.example'", { transaction: t });
		// The site named on lot certificates.
		await db().query(`INSERT INTO meta (key, value) VALUES ('site-name', to_jsonb('Corvane Semiconductor, Halden works'::text)) ON CONFLICT (key) DO NOTHING`, { transaction: t });
		// A finished gauge study of, so the Studies page shows an analysis at once.
		await seedDemoStudy(t);
		await db().query("INSERT INTO meta (key, value) VALUES ('demo-seeded', to_jsonb(now()))", { transaction: t });
	});
	fs.mkdirSync(dataDir, { recursive: true });
	fs.writeFileSync(path.join(dataDir, 'demo-station-tokens.json'), JSON.stringify(tokens, null, 2), { mode: 0o600 });
	return true;
}
