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
		// Bounded waits, so a database that is away gives a 503 within seconds instead of a hang:
		// a connection attempt gives up after 3 s, waiting for a free pooled connection after 4 s,
		// and one statement after 30 s (no request of ours needs that long; a migration that does
		// runs its statement in a transaction that starts with SET LOCAL statement_timeout).
		// 20 connections: a 20-station line posting at once gets one each instead of queueing (two
		// instances use 40 of the private cluster's 200; size max_connections for more instances).
		pool: { max: 20, min: 0, idle: 10_000, acquire: 4_000 },
		dialectOptions: { connectionTimeoutMillis: 3_000, statement_timeout: 30_000, keepAlive: true },
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
