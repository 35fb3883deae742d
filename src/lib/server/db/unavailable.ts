// One answer to "is this error the database being away?", so every layer maps an outage the same
// way: 503 with Retry-After (public contract), never a 500 and never a hang.
import { ConnectionError } from 'sequelize';

/** Seconds a client should wait before trying again while the database is unavailable. */
export const DATABASE_RETRY_AFTER_S = 5;

// PostgreSQL SQLSTATEs (Appendix A of the PostgreSQL manual): class 08 connection exceptions,
// 57P01 admin shutdown, 57P02 crash shutdown, 57P03 cannot connect now (starting up), 53300 too
// many connections, 57014 query canceled (our statement_timeout: the server is overloaded).
const SQLSTATES = new Set(['08000', '08001', '08003', '08004', '08006', '08007', '08P01', '57P01', '57P02', '57P03', '53300', '57014']);
// Node socket errors on the way to the database.
const SOCKET_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENETUNREACH', 'EAI_AGAIN']);
// node-postgres says these without a code.
const MESSAGES = /connection terminated|connection timeout|timeout exceeded when trying to connect|client has encountered a connection error|not queryable/i;

function field(e: object, name: string): unknown {
	return name in e ? (e as Record<string, unknown>)[name] : undefined;
}

/**
 * True when `error` (or what it wraps: Sequelize's `original`/`parent`, an Error's `cause`) says
 * the database cannot be reached or is shutting down, rather than refusing a query.
 */
export function isDatabaseUnavailable(error: unknown, depth = 0): boolean {
	if (depth > 4 || typeof error !== 'object' || error === null) return false;
	if (error instanceof ConnectionError) return true;
	const code = field(error, 'code');
	if (typeof code === 'string' && (SQLSTATES.has(code) || SOCKET_CODES.has(code))) return true;
	// A Unix socket that is not there: the server is stopped (it removes its socket file).
	if (code === 'ENOENT' && field(error, 'syscall') === 'connect') return true;
	const message = field(error, 'message');
	if (typeof message === 'string' && MESSAGES.test(message)) return true;
	return ['original', 'parent', 'cause'].some((k) => {
		const inner = field(error, k);
		return inner !== error && isDatabaseUnavailable(inner, depth + 1);
	});
}
