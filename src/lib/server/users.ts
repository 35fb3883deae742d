// People: create, list, change role, deactivate, change password. Every change is audited.
import { QueryTypes, UniqueConstraintError } from 'sequelize';
import type { Role } from '$lib/auth/roles';
import { audit, type Actor } from './audit';
import { db } from './db';
import { hashPassword, verifyPassword } from './passwords';

export type UserSummary = { id: number; email: string; name: string; role: Role; active: boolean; createdAt: string };

type Row = { id: string; email: string; name: string; role: Role; active: boolean; created_at: Date };

const plain = (r: Row): UserSummary => ({
	id: Number(r.id),
	email: r.email,
	name: r.name,
	role: r.role,
	active: r.active,
	createdAt: r.created_at.toISOString()
});

export async function listUsers(): Promise<UserSummary[]> {
	const rows = await db().query<Row>('SELECT id, email, name, role, active, created_at FROM users ORDER BY active DESC, name', {
		type: QueryTypes.SELECT
	});
	return rows.map(plain);
}

export async function countUsers(): Promise<number> {
	const rows = await db().query<{ n: string }>('SELECT count(*) AS n FROM users', { type: QueryTypes.SELECT });
	return Number(rows[0]?.n ?? 0);
}

export type CreateUserResult = { ok: true; user: UserSummary } | { ok: false; field: 'email'; message: string };

/** Adds a person; a duplicate e-mail (in any letter case) is a field error, not an exception. */
export async function createUser(
	actor: Actor,
	input: { email: string; name: string; role: Role; password: string }
): Promise<CreateUserResult> {
	const hash = await hashPassword(input.password);
	try {
		return await db().transaction(async (transaction) => {
			const rows = await db().query<Row>(
				`INSERT INTO users (email, name, role, password_hash) VALUES (:email, :name, :role, :hash)
				 RETURNING id, email, name, role, active, created_at`,
				{ replacements: { ...input, hash }, type: QueryTypes.SELECT, transaction }
			);
			const row = rows[0];
			if (!row) throw new Error('insert returned no row');
			const user = plain(row);
			await audit(actor, 'user', user.id, 'create', null, { email: user.email, name: user.name, role: user.role }, transaction);
			return { ok: true as const, user };
		});
	} catch (e) {
		if (e instanceof UniqueConstraintError) return { ok: false, field: 'email', message: 'A user with this e-mail already exists' };
		throw e;
	}
}

export type ChangeResult = { ok: true } | { ok: false; message: string };

async function activeAdmins(): Promise<number> {
	const rows = await db().query<{ n: string }>("SELECT count(*) AS n FROM users WHERE role = 'admin' AND active", {
		type: QueryTypes.SELECT
	});
	return Number(rows[0]?.n ?? 0);
}

async function findUser(id: number): Promise<UserSummary | null> {
	const rows = await db().query<Row>('SELECT id, email, name, role, active, created_at FROM users WHERE id = :id', {
		replacements: { id },
		type: QueryTypes.SELECT
	});
	return rows[0] ? plain(rows[0]) : null;
}

/** Changes a person's role; the last active admin cannot be demoted (nobody could undo it). */
export async function changeRole(actor: Actor, userId: number, role: Role): Promise<ChangeResult> {
	const user = await findUser(userId);
	if (!user) return { ok: false, message: 'No such user' };
	if (user.role === role) return { ok: true };
	if (user.role === 'admin' && user.active && (await activeAdmins()) <= 1) {
		return { ok: false, message: 'The last active administrator cannot change role' };
	}
	await db().transaction(async (transaction) => {
		await db().query('UPDATE users SET role = :role WHERE id = :id', { replacements: { role, id: userId }, transaction });
		await audit(actor, 'user', userId, 'change-role', { role: user.role }, { role }, transaction);
	});
	return { ok: true };
}

/** Deactivates or reactivates a person; deactivation ends their sessions at once. */
export async function setActive(actor: Actor, userId: number, active: boolean): Promise<ChangeResult> {
	const user = await findUser(userId);
	if (!user) return { ok: false, message: 'No such user' };
	if (!active && actor.userId === userId) return { ok: false, message: 'You cannot deactivate yourself' };
	if (!active && user.role === 'admin' && user.active && (await activeAdmins()) <= 1) {
		return { ok: false, message: 'The last active administrator cannot be deactivated' };
	}
	await db().transaction(async (transaction) => {
		await db().query('UPDATE users SET active = :active WHERE id = :id', { replacements: { active, id: userId }, transaction });
		if (!active) await db().query('DELETE FROM sessions WHERE user_id = :id', { replacements: { id: userId }, transaction });
		await audit(actor, 'user', userId, active ? 'reactivate' : 'deactivate', { active: user.active }, { active }, transaction);
	});
	return { ok: true };
}

export type PasswordChange = { ok: true } | { ok: false; field: 'current'; message: string };

/** Changes one's own password after checking the current one; other sessions are ended. */
export async function changePassword(
	actor: Actor & { userId: number },
	current: string,
	next: string,
	keepSessionTokenHash: string | null
): Promise<PasswordChange> {
	const rows = await db().query<{ password_hash: string }>('SELECT password_hash FROM users WHERE id = :id', {
		replacements: { id: actor.userId },
		type: QueryTypes.SELECT
	});
	const row = rows[0];
	if (!row || !(await verifyPassword(row.password_hash, current))) {
		return { ok: false, field: 'current', message: 'The current password is not right' };
	}
	const hash = await hashPassword(next);
	await db().transaction(async (transaction) => {
		await db().query('UPDATE users SET password_hash = :hash, password_changed_at = now() WHERE id = :id', {
			replacements: { hash, id: actor.userId },
			transaction
		});
		await db().query('DELETE FROM sessions WHERE user_id = :id AND token_hash IS DISTINCT FROM :keep', {
			replacements: { id: actor.userId, keep: keepSessionTokenHash },
			transaction
		});
		await audit(actor, 'user', actor.userId, 'change-password', null, null, transaction);
	});
	return { ok: true };
}

/** An administrator sets a new password for someone (forgotten password); their sessions end. */
export async function setPasswordByAdmin(actor: Actor, userId: number, password: string): Promise<ChangeResult> {
	const user = await findUser(userId);
	if (!user) return { ok: false, message: 'No such user' };
	const hash = await hashPassword(password);
	await db().transaction(async (transaction) => {
		await db().query('UPDATE users SET password_hash = :hash, password_changed_at = now() WHERE id = :id', {
			replacements: { hash, id: userId },
			transaction
		});
		await db().query('DELETE FROM sessions WHERE user_id = :id', { replacements: { id: userId }, transaction });
		await audit(actor, 'user', userId, 'set-password', null, null, transaction);
	});
	return { ok: true };
}
