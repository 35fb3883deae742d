import { QueryTypes } from 'sequelize';
import { describe, expect, test } from 'vitest';
import { closeSession, openSession, signIn, userFromToken } from '$lib/server/auth';
import { db } from '$lib/server/db';
import { recordHit, peekLimit, SIGN_IN_LIMITS } from '$lib/server/ratelimit';
import { changePassword, changeRole, createUser, setActive } from '$lib/server/users';
import { uniqueEmail, useDatabase } from './setup-db';

useDatabase();
const system = { userId: null, label: 'test' };
const PASSWORD = 'a good long password';

async function newUser(role: 'admin' | 'engineer' | 'operator' = 'operator') {
	const r = await createUser(system, { email: uniqueEmail(role), name: `Test ${role}`, role, password: PASSWORD });
	if (!r.ok) throw new Error(r.message);
	return r.user;
}

describe('sign-in against the real database', () => {
	test('the right password opens a session that identifies the user', async () => {
		const u = await newUser('engineer');
		const r = await signIn(u.email.toUpperCase(), PASSWORD, '10.0.0.1');
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(await userFromToken(r.token)).toMatchObject({ id: u.id, role: 'engineer' });
	});

	test('an unknown e-mail and a wrong password get the same answer', async () => {
		const u = await newUser();
		const unknown = await signIn(uniqueEmail('nobody'), PASSWORD, '10.0.0.2');
		const wrong = await signIn(u.email, 'not the password', '10.0.0.2');
		expect(unknown).toEqual({ ok: false, reason: 'invalid' });
		expect(wrong).toEqual({ ok: false, reason: 'invalid' });
	});

	test(`after ${SIGN_IN_LIMITS.perAccount} failures the account is locked for the window, even with the right password`, async () => {
		const u = await newUser();
		for (let i = 0; i < SIGN_IN_LIMITS.perAccount; i++) {
			expect(await signIn(u.email, 'wrong', `10.1.0.${i}`)).toEqual({ ok: false, reason: 'invalid' });
		}
		const locked = await signIn(u.email, PASSWORD, '10.1.0.99');
		expect(locked.ok).toBe(false);
		if (locked.ok || locked.reason !== 'rate-limited') throw new Error('expected a rate limit');
		expect(locked.retryAfterS).toBeGreaterThan(0);
		expect(locked.retryAfterS).toBeLessThanOrEqual(SIGN_IN_LIMITS.windowS);
	});

	test('one client address is limited across accounts', async () => {
		const addr = '10.2.0.1';
		for (let i = 0; i < SIGN_IN_LIMITS.perAddress; i++) await recordHit(`signin:address:${addr}`, SIGN_IN_LIMITS.windowS);
		const u = await newUser();
		const r = await signIn(u.email, PASSWORD, addr);
		expect(r).toMatchObject({ ok: false, reason: 'rate-limited' });
	});

	test('a fixed window restarts once it has passed', async () => {
		const key = `test:window:${Date.now()}`;
		expect(await recordHit(key, 1)).toBe(1);
		expect(await recordHit(key, 1)).toBe(2);
		expect((await peekLimit(key, 2, 1)).blocked).toBe(true);
		await new Promise((r) => setTimeout(r, 1100));
		expect((await peekLimit(key, 2, 1)).blocked).toBe(false);
		expect(await recordHit(key, 1)).toBe(1);
	});

	test('a session past its expiry no longer identifies anyone', async () => {
		const u = await newUser();
		const { token } = await openSession(u.id, null);
		await db().query("UPDATE sessions SET expires_at = now() - interval '1 second' WHERE user_id = :id", { replacements: { id: u.id } });
		expect(await userFromToken(token)).toBeNull();
	});

	test('sign-out ends the session on the server', async () => {
		const u = await newUser();
		const { token } = await openSession(u.id, null);
		await closeSession(token);
		expect(await userFromToken(token)).toBeNull();
	});

	test('deactivating a person ends their sessions and refuses their sign-in', async () => {
		const admin = await newUser('admin');
		const u = await newUser();
		const { token } = await openSession(u.id, null);
		expect(await setActive({ userId: admin.id, label: admin.email }, u.id, false)).toEqual({ ok: true });
		expect(await userFromToken(token)).toBeNull();
		expect(await signIn(u.email, PASSWORD, '10.3.0.1')).toEqual({ ok: false, reason: 'invalid' });
	});
});

describe('people management', () => {
	test('a duplicate e-mail in another letter case is a field error and stores nothing', async () => {
		const u = await newUser();
		const before = await db().query<{ n: string }>('SELECT count(*) AS n FROM users', { type: QueryTypes.SELECT });
		const r = await createUser(system, { email: u.email.toUpperCase(), name: 'Again', role: 'operator', password: PASSWORD });
		expect(r).toMatchObject({ ok: false, field: 'email' });
		const after = await db().query<{ n: string }>('SELECT count(*) AS n FROM users', { type: QueryTypes.SELECT });
		expect(after[0]?.n).toBe(before[0]?.n);
	});

	test('a role change is audited with before and after', async () => {
		const admin = await newUser('admin');
		const u = await newUser('operator');
		expect(await changeRole({ userId: admin.id, label: admin.email }, u.id, 'engineer')).toEqual({ ok: true });
		const rows = await db().query<{ before: unknown; after: unknown; actor: string }>(
			"SELECT before, after, actor FROM audit_entries WHERE entity = 'user' AND entity_id = :id AND action = 'change-role'",
			{ replacements: { id: String(u.id) }, type: QueryTypes.SELECT }
		);
		expect(rows).toEqual([{ before: { role: 'operator' }, after: { role: 'engineer' }, actor: admin.email }]);
	});

	test('the last active administrator cannot be demoted or deactivated', async () => {
		// Deactivate every other admin in this shared database first, then try the last one.
		const keep = await newUser('admin');
		await db().query("UPDATE users SET active = false WHERE role = 'admin' AND id <> :id", { replacements: { id: keep.id } });
		const actor = { userId: null, label: 'test' };
		expect(await changeRole(actor, keep.id, 'operator')).toMatchObject({ ok: false });
		expect(await setActive(actor, keep.id, false)).toMatchObject({ ok: false });
		const rows = await db().query<{ role: string; active: boolean }>('SELECT role, active FROM users WHERE id = :id', {
			replacements: { id: keep.id },
			type: QueryTypes.SELECT
		});
		expect(rows[0]).toEqual({ role: 'admin', active: true });
	});

	test('changing one’s password needs the current one and ends other sessions', async () => {
		const u = await newUser();
		const other = await openSession(u.id, null);
		const actor = { userId: u.id, label: u.email };
		expect(await changePassword(actor, 'wrong current', 'a brand new password', null)).toMatchObject({ ok: false, field: 'current' });
		expect(await userFromToken(other.token)).not.toBeNull();
		expect(await changePassword(actor, PASSWORD, 'a brand new password', null)).toEqual({ ok: true });
		expect(await userFromToken(other.token)).toBeNull();
		expect((await signIn(u.email, 'a brand new password', '10.4.0.1')).ok).toBe(true);
	});
});
