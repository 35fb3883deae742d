// Database preparation at server start: migrations, the first admin, and the demo scenario.
import { QueryTypes } from 'sequelize';
import { db } from './db';
import { seedDemo } from './demo';
import { settings } from './env';
import { migrate } from './db/migrate';
import { hashPassword } from './passwords';

/** Creates the first admin from the settings when the database has no user at all. */
export async function ensureFirstAdmin(email: string, password: string, name = 'Site administrator'): Promise<boolean> {
	const rows = await db().query<{ n: string }>('SELECT count(*) AS n FROM users', { type: QueryTypes.SELECT });
	if (Number(rows[0]?.n ?? 0) > 0) return false;
	await db().query(
		`INSERT INTO users (email, name, role, password_hash) VALUES (:email, :name, 'admin', :hash) ON CONFLICT DO NOTHING`,
		{ replacements: { email, name, hash: await hashPassword(password) } }
	);
	return true;
}

/** Brings the database to the current schema and seeds what the settings ask for. */
export async function prepareDatabase(): Promise<void> {
	const s = settings();
	const applied = await migrate(db());
	if (applied.length) console.log(`[biasline] migrations applied: ${applied.join(', ')}`);
	if (await ensureFirstAdmin(s.BIASLINE_ADMIN_EMAIL, s.BIASLINE_ADMIN_PASSWORD)) {
		console.log(`[biasline] first admin created: ${s.BIASLINE_ADMIN_EMAIL}`);
	}
	if (s.BIASLINE_DEMO === '1' && (await seedDemo(s.BIASLINE_DATA_DIR))) console.log('[biasline] demo scenario seeded');
}
