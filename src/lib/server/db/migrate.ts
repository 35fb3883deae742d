// Schema migrations with umzug. The migration files are bundled by Vite (import.meta.glob), so
// the built server and the tests run the very same code. Never sequelize.sync().
import type { Sequelize } from 'sequelize';
import { QueryTypes } from 'sequelize';
import { Umzug, type MigrationFn } from 'umzug';

export type Migration = MigrationFn<Sequelize>;

type MigrationModule = { up: Migration; down?: Migration };

const modules = import.meta.glob<MigrationModule>('./migrations/*.ts', { eager: true });

// Any fixed number: the advisory lock serialises migrations when several instances start at once.
const MIGRATION_LOCK = 4_207_731;

/** Applies every pending migration, inside an advisory lock; returns the names applied. */
export async function migrate(sequelize: Sequelize): Promise<string[]> {
	const migrations = Object.entries(modules)
		.sort(([a], [b]) => a.localeCompare(b))
		.map(([file, mod]) => ({
			name: file.replace(/^.*\//, '').replace(/\.ts$/, ''),
			up: mod.up,
			down: mod.down
		}));
	const umzug = new Umzug<Sequelize>({
		migrations,
		context: sequelize,
		logger: undefined,
		storage: {
			async executed() {
				const rows = await sequelize.query<{ name: string }>('SELECT name FROM schema_migrations ORDER BY name', {
					type: QueryTypes.SELECT
				});
				return rows.map((r) => r.name);
			},
			async logMigration({ name }) {
				await sequelize.query('INSERT INTO schema_migrations (name) VALUES (:name)', { replacements: { name } });
			},
			async unlogMigration({ name }) {
				await sequelize.query('DELETE FROM schema_migrations WHERE name = :name', { replacements: { name } });
			}
		}
	});
	// Created under the lock and committed before the run: two instances racing on IF NOT EXISTS
	// can both try to create it, and umzug's queries (on other connections) must see it.
	await sequelize.transaction(async (t) => {
		await sequelize.query('SELECT pg_advisory_xact_lock(:k)', { replacements: { k: MIGRATION_LOCK }, transaction: t });
		await sequelize.query(
			'CREATE TABLE IF NOT EXISTS schema_migrations (name text PRIMARY KEY, applied_at timestamptz NOT NULL DEFAULT now())',
			{ transaction: t }
		);
	});
	// The transaction's connection holds the lock until the run ends; umzug's queries use others.
	return sequelize.transaction(async (t) => {
		await sequelize.query('SELECT pg_advisory_xact_lock(:k)', { replacements: { k: MIGRATION_LOCK }, transaction: t });
		const applied = await umzug.up();
		return applied.map((m) => m.name);
	});
}
