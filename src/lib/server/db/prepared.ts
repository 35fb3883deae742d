// Named statements for the station post's hot path. Sequelize sends every statement unnamed, so
// PostgreSQL parses and plans it on every call; a statement sent by name is parsed once per
// connection and, after a few calls, runs a cached plan. For the post's large statements that
// planning was a good part of the answer time. Everything else goes through Sequelize.
import type { Transaction } from 'sequelize';
import { db } from './index';
import { isDatabaseUnavailable } from './unavailable';

/** A statement sent by name: the name must be unique in the process and its text fixed. */
export type Statement = { readonly name: string; readonly text: string };

type Client = {
	query<R>(config: { name: string; text: string; values: unknown[] }): Promise<{ rows: R[] }>;
	_invalid?: boolean;
};

const defined = new Map<string, string>();

export function statement(name: string, text: string): Statement {
	const known = defined.get(name);
	if (known !== undefined && known !== text) throw new Error(`statement ${name} is defined twice with different texts`);
	defined.set(name, text);
	return { name, text };
}

/** The pooled connection behind a Sequelize transaction (Sequelize sets it when the transaction begins). */
function clientOf(t: Transaction): Client {
	const c = (t as unknown as { connection?: Client }).connection;
	if (!c) throw new Error('the transaction has no connection yet');
	return c;
}

async function send<R>(c: Client, s: Statement, values: unknown[]): Promise<R[]> {
	try {
		return (await c.query<R>({ name: s.name, text: s.text, values })).rows;
	} catch (e) {
		// As Sequelize does for its own statements: a connection that failed goes back to the pool
		// marked, and the pool drops it instead of handing it out again.
		if (isDatabaseUnavailable(e)) c._invalid = true;
		throw e;
	}
}

/**
 * Runs a named statement: inside the transaction `t` when given, else on a connection borrowed
 * from Sequelize's pool (the same bounds: at most 20 connections, a 4 s wait for one). Values go
 * to node-postgres as they are; rows come back through Sequelize's type parsers.
 */
export async function run<R>(s: Statement, values: unknown[], t?: Transaction): Promise<R[]> {
	if (t) return send<R>(clientOf(t), s, values);
	const pool = db().connectionManager as unknown as { getConnection(o: { type: 'write' }): Promise<Client>; releaseConnection(c: Client): void };
	const c = await pool.getConnection({ type: 'write' });
	try {
		return await send<R>(c, s, values);
	} finally {
		pool.releaseConnection(c);
	}
}
