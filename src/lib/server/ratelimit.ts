// Fixed-window rate limits kept in PostgreSQL, so every app instance shares the same counters.
import { QueryTypes } from 'sequelize';
import { db } from './db';
import { run, statement } from './db/prepared';
import type { StationPrincipal } from './auth';

export type LimitState = { blocked: boolean; count: number; retryAfterS: number };

/** Reads a counter without changing it; blocked when `limit` hits already fell in the window. */
export async function peekLimit(key: string, limit: number, windowS: number): Promise<LimitState> {
	const rows = await db().query<{ count: number; remaining: number }>(
		`SELECT count, extract(epoch FROM window_start + make_interval(secs => :w) - now())::float8 AS remaining
		 FROM rate_limits WHERE key = :key`,
		{ replacements: { key, w: windowS }, type: QueryTypes.SELECT }
	);
	const row = rows[0];
	if (!row || row.remaining <= 0) return { blocked: false, count: 0, retryAfterS: 0 };
	return { blocked: row.count >= limit, count: row.count, retryAfterS: Math.max(1, Math.ceil(row.remaining)) };
}

/**
 * Counts one hit in the key's current window (a new window starts when the old one has ended).
 * The one statement commits without waiting for the disk (synchronous_commit off for itself
 * only): a counter lost in a crash costs nothing, and a station post saves a WAL flush.
 */
/**
 * The upsert that counts one hit for each `key` (an SQL text expression) of the rows of `from`
 * (an SQL FROM clause), with the window length in seconds in parameter `windowParam`; returns the count and the
 * seconds left in the window. Shared by recordHit and the station lookup (stations.ts), which
 * counts a station's request in the same statement that finds the station.
 */
export function hitUpsert(o: { key: string; from: string; windowParam: string }): string {
	const windowParam = o.windowParam;
	return `INSERT INTO rate_limits AS r (key, window_start, count) SELECT ${o.key}, now(), 1 ${o.from}
	   ON CONFLICT (key) DO UPDATE SET
	     count = CASE WHEN r.window_start + make_interval(secs => ${windowParam}) <= now() THEN 1 ELSE r.count + 1 END,
	     window_start = CASE WHEN r.window_start + make_interval(secs => ${windowParam}) <= now() THEN now() ELSE r.window_start END
	   RETURNING count, extract(epoch FROM r.window_start + make_interval(secs => ${windowParam}) - now())::float8 AS remaining`;
}

const HIT = statement(
	'rate-limit-hit',
	`WITH quick AS (SELECT set_config('synchronous_commit', 'off', true) AS v),
	 hit AS (${hitUpsert({ key: 'CAST($1 AS text)', from: '', windowParam: '$2' })})
	 SELECT (SELECT count FROM hit) AS count, (SELECT v FROM quick) AS quick`
);

export async function recordHit(key: string, windowS: number): Promise<number> {
	const rows = await run<{ count: number }>(HIT, [key, windowS]);
	return rows[0]?.count ?? 1;
}

/** Forgets a counter (a successful sign-in clears the account's failures). */
export async function resetLimit(key: string): Promise<void> {
	await db().query('DELETE FROM rate_limits WHERE key = :key', { replacements: { key } });
}

/**
 * Sign-in limits, common practice: at most 5 failed attempts per account and 30 failed attempts
 * per client address in 15 minutes.
 */
export const SIGN_IN_LIMITS = { perAccount: 5, perAddress: 30, windowS: 15 * 60 } as const;

/**
 * Station posts, generous by default: 1 000 requests per station token in 10 s (a line posts a
 * few batches a second). Counted in PostgreSQL so every app instance shares the budget.
 */
export const STATION_LIMITS = { perWindow: 1000, windowS: 10 } as const;

/** The seconds to wait for a station whose window holds `count` hits, else null. */
export function stationWait(count: number, remainingS: number): number | null {
	return count <= STATION_LIMITS.perWindow ? null : Math.max(1, Math.ceil(remainingS));
}

/**
 * Counts a station request; the seconds to wait when over the limit, else null. A principal
 * from the bearer-token lookup of a POST already carries its counted hit (one statement for both).
 */
export async function stationOverLimit(station: number | StationPrincipal): Promise<number | null> {
	if (typeof station !== 'number' && station.hit) return stationWait(station.hit.count, station.hit.remainingS);
	const id = typeof station === 'number' ? station : station.id;
	const key = `station:${id}`;
	const count = await recordHit(key, STATION_LIMITS.windowS);
	if (count <= STATION_LIMITS.perWindow) return null;
	const state = await peekLimit(key, STATION_LIMITS.perWindow, STATION_LIMITS.windowS);
	return Math.max(1, state.retryAfterS);
}
