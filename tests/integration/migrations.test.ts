import pg from 'pg';
import { QueryTypes, Sequelize } from 'sequelize';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { migrate } from '$lib/server/db/migrate';
import { adminUrl } from './setup-db';

// A brand-new empty database, created and dropped by this file.
const name = `biasline_mig_${process.pid}_${Date.now()}`;
let admin: pg.Client;
let sequelize: Sequelize;

beforeAll(async () => {
	admin = new pg.Client({ connectionString: adminUrl() });
	await admin.connect();
	await admin.query(`CREATE DATABASE ${name}`);
	const url = new URL(adminUrl());
	url.pathname = `/${name}`;
	sequelize = new Sequelize(url.toString(), { dialect: 'postgres', dialectModule: pg, logging: false });
});

afterAll(async () => {
	await sequelize.close();
	await admin.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
	await admin.end();
});

describe('migrations on an empty database', () => {
	test('apply every migration, then nothing on a second run', async () => {
		const first = await migrate(sequelize);
		expect(first).toContain('0001-foundation');
		const tables = await sequelize.query<{ tablename: string }>("SELECT tablename FROM pg_tables WHERE schemaname = 'public'", {
			type: QueryTypes.SELECT
		});
		const names = tables.map((t) => t.tablename);
		for (const t of ['users', 'sessions', 'rate_limits', 'audit_entries', 'products', 'plan_versions', 'stations', 'lots', 'schema_migrations']) {
			expect(names).toContain(t);
		}
		expect(await migrate(sequelize)).toEqual([]);
	});

	test('two instances migrating at once apply each migration once', async () => {
		const url = new URL(adminUrl());
		const other = `${name}_b`;
		await admin.query(`CREATE DATABASE ${other}`);
		url.pathname = `/${other}`;
		const a = new Sequelize(url.toString(), { dialect: 'postgres', dialectModule: pg, logging: false });
		const b = new Sequelize(url.toString(), { dialect: 'postgres', dialectModule: pg, logging: false });
		try {
			const [ra, rb] = await Promise.all([migrate(a), migrate(b)]);
			expect([...ra, ...rb].filter((m) => m === '0001-foundation')).toHaveLength(1);
		} finally {
			await a.close();
			await b.close();
			await admin.query(`DROP DATABASE IF EXISTS ${other} WITH (FORCE)`);
		}
	});

	test('the audit trail refuses UPDATE and DELETE', async () => {
		await sequelize.query("INSERT INTO audit_entries (actor, entity, entity_id, action) VALUES ('test', 'thing', '1', 'create')");
		await expect(sequelize.query("UPDATE audit_entries SET action = 'edited'")).rejects.toThrow(/cannot be changed/);
		await expect(sequelize.query('DELETE FROM audit_entries')).rejects.toThrow(/cannot be changed/);
	});

	test('a role outside the three is refused by the schema', async () => {
		await expect(
			sequelize.query("INSERT INTO users (email, name, role, password_hash) VALUES ('x@y.example', 'X', 'superuser', 'h')")
		).rejects.toThrow();
	});
});
