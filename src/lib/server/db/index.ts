// The one Sequelize instance of the process. Created on first use so that importing a server
// module (for the build's analysis step, or a unit test) never opens a connection.
import pg from 'pg';
import { Sequelize } from 'sequelize';
import { settings } from '../env';

let instance: Sequelize | null = null;

/** The shared connection pool. */
export function db(): Sequelize {
	if (instance) return instance;
	instance = new Sequelize(settings().DATABASE_URL, {
		dialect: 'postgres',
		dialectModule: pg,
		logging: false,
		pool: { max: 10, min: 0, idle: 10_000, acquire: 10_000 },
		define: { underscored: true, timestamps: false }
	});
	return instance;
}

/** Closes the pool (tests and shutdown). */
export async function closeDb(): Promise<void> {
	if (instance) {
		const s = instance;
		instance = null;
		await s.close();
	}
}
