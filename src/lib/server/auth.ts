// Sign-in sessions and the guards every protected load, action and endpoint calls.
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { createHash, randomBytes } from 'node:crypto';
import { jwtVerify, SignJWT } from 'jose';
import { QueryTypes } from 'sequelize';
import { mayUse, isRole, type Area, type Role } from '$lib/auth/roles';
import { db } from './db';
import { settings } from './env';
import { dummyHash, verifyPassword } from './passwords';
import { peekLimit, recordHit, resetLimit, SIGN_IN_LIMITS } from './ratelimit';

export const SESSION_COOKIE = 'biasline_session';

export type SessionUser = { id: number; email: string; name: string; role: Role };
/** A station behind a bearer token; `hit`: its request as counted against the rate limit, when counted at lookup. */
export type StationPrincipal = { id: number; name: string; hit?: { count: number; remainingS: number } };

function keyBytes(key: string): Uint8Array {
	return new TextEncoder().encode(key);
}

export function sha256(text: string): string {
	return createHash('sha256').update(text).digest('hex');
}

/** Signs a session token (HS256) carrying the session's random id; expires at `expiresAt`. */
export async function signSessionToken(sid: string, expiresAt: Date, key = settings().BIASLINE_SESSION_KEY): Promise<string> {
	return new SignJWT({ sid })
		.setProtectedHeader({ alg: 'HS256' })
		.setIssuedAt()
		.setExpirationTime(Math.floor(expiresAt.getTime() / 1000))
		.setIssuer('biasline')
		.sign(keyBytes(key));
}

/** The session id inside a valid, unexpired token; null for a tampered, expired or foreign one. */
export async function readSessionToken(token: string, key = settings().BIASLINE_SESSION_KEY): Promise<string | null> {
	try {
		const { payload } = await jwtVerify(token, keyBytes(key), { issuer: 'biasline', algorithms: ['HS256'] });
		return typeof payload.sid === 'string' ? payload.sid : null;
	} catch {
		return null;
	}
}

type UserRow = { id: string; email: string; name: string; role: string; password_hash: string; active: boolean };

function toSessionUser(row: { id: string | number; email: string; name: string; role: string }): SessionUser | null {
	if (!isRole(row.role)) return null;
	return { id: Number(row.id), email: row.email, name: row.name, role: row.role };
}

export type SignInResult =
	| { ok: true; user: SessionUser; token: string; expiresAt: Date }
	| { ok: false; reason: 'invalid' }
	| { ok: false; reason: 'rate-limited'; retryAfterS: number };

/**
 * Checks an e-mail and password and opens a session. The same answer (and about the same time)
 * for an unknown e-mail, a wrong password and a deactivated account.
 */
export async function signIn(email: string, password: string, clientAddress: string): Promise<SignInResult> {
	const accountKey = `signin:account:${email.trim().toLowerCase()}`;
	const addressKey = `signin:address:${clientAddress}`;
	const [account, address] = await Promise.all([
		peekLimit(accountKey, SIGN_IN_LIMITS.perAccount, SIGN_IN_LIMITS.windowS),
		peekLimit(addressKey, SIGN_IN_LIMITS.perAddress, SIGN_IN_LIMITS.windowS)
	]);
	if (account.blocked || address.blocked) {
		return { ok: false, reason: 'rate-limited', retryAfterS: Math.max(account.retryAfterS, address.retryAfterS) };
	}
	const rows = await db().query<UserRow>(
		'SELECT id, email, name, role, password_hash, active FROM users WHERE lower(email) = lower(:email)',
		{ replacements: { email: email.trim() }, type: QueryTypes.SELECT }
	);
	const row = rows[0];
	const good = row ? await verifyPassword(row.password_hash, password) : await verifyPassword(await dummyHash(), password).then(() => false);
	const user = row && good && row.active ? toSessionUser(row) : null;
	if (!user) {
		// Failures count, per account and per address (many people may share one address).
		await Promise.all([recordHit(accountKey, SIGN_IN_LIMITS.windowS), recordHit(addressKey, SIGN_IN_LIMITS.windowS)]);
		return { ok: false, reason: 'invalid' };
	}
	await resetLimit(accountKey);
	const { token, expiresAt } = await openSession(user.id, clientAddress);
	return { ok: true, user, token, expiresAt };
}

/** Stores a new session for the user and returns its signed token. */
export async function openSession(userId: number, clientAddress: string | null, now = new Date()) {
	const sid = randomBytes(32).toString('base64url');
	const expiresAt = new Date(now.getTime() + settings().BIASLINE_SESSION_HOURS * 3600_000);
	await db().query(
		'INSERT INTO sessions (user_id, token_hash, expires_at, client_address) VALUES (:userId, :hash, :expiresAt, :addr)',
		{ replacements: { userId, hash: sha256(sid), expiresAt, addr: clientAddress } }
	);
	return { token: await signSessionToken(sid, expiresAt), expiresAt };
}

/** The signed-in user behind a cookie value, or null (bad token, ended session, inactive user). */
export async function userFromToken(token: string | undefined): Promise<SessionUser | null> {
	if (!token) return null;
	const sid = await readSessionToken(token);
	if (!sid) return null;
	const rows = await db().query<{ id: string; email: string; name: string; role: string }>(
		`SELECT u.id, u.email, u.name, u.role FROM sessions s JOIN users u ON u.id = s.user_id
		 WHERE s.token_hash = :hash AND s.expires_at > now() AND u.active`,
		{ replacements: { hash: sha256(sid) }, type: QueryTypes.SELECT }
	);
	return rows[0] ? toSessionUser(rows[0]) : null;
}

/** Ends the session behind a cookie value (sign-out). */
export async function closeSession(token: string | undefined): Promise<void> {
	if (!token) return;
	const sid = await readSessionToken(token);
	if (sid) await db().query('DELETE FROM sessions WHERE token_hash = :hash', { replacements: { hash: sha256(sid) } });
}

/** Cookie options: HttpOnly, SameSite=Lax, Secure except on plain-HTTP loopback (local demo). */
export function cookieOptions(url: URL, expiresAt?: Date) {
	const loopback = ['127.0.0.1', 'localhost', '[::1]'].includes(url.hostname);
	return {
		path: '/',
		httpOnly: true,
		sameSite: 'lax' as const,
		secure: url.protocol === 'https:' || !loopback,
		...(expiresAt ? { expires: expiresAt } : {})
	};
}

/** For pages and form actions: the signed-in user allowed into `area`, else redirect or 403. */
export function requireArea(event: Pick<RequestEvent, 'locals' | 'url'>, area: Area): SessionUser {
	const user = event.locals.user;
	if (!user) redirect(303, `/login?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
	if (!mayUse(user.role, area)) error(403, 'Your role does not give access to this page');
	return user;
}

/** For JSON endpoints of people: 401 without a session, 403 when the role may not use `area`. */
export function requireApiArea(locals: App.Locals, area: Area): SessionUser {
	const user = locals.user;
	if (!user) error(401, locals.station ? 'This endpoint is for people, not stations' : 'Sign in first');
	if (!mayUse(user.role, area)) error(403, 'Your role does not allow this');
	return user;
}

/** For station endpoints: the station behind the bearer token, else 401 (a person's session is not enough). */
export function requireStation(locals: App.Locals): StationPrincipal {
	const station = locals.station;
	if (!station) error(401, locals.user ? 'This endpoint is for test stations: send the station token as a bearer token' : 'Send a valid station token as a bearer token');
	return station;
}
