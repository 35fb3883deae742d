// Who follows which line or product, and each person's digest setting. Plain objects out.
import { QueryTypes } from 'sequelize';
import { db } from '../db';
import { DIGEST_MINUTES, type DigestMinutes } from './types';

export type Subscription = { id: number; scope: 'line' | 'product'; targetId: number; label: string; createdAt: string };
export type Target = { id: number; label: string };

type SubRow = { id: string; scope: 'line' | 'product'; target_id: string; label: string; created_at: Date };

/** A person's subscriptions, lines first, then products, by name. */
export async function listSubscriptions(userId: number): Promise<Subscription[]> {
	const rows = await db().query<SubRow>(
		`SELECT s.id, s.scope, COALESCE(s.line_id, s.product_id) AS target_id,
		        COALESCE(l.name, p.code || ' · ' || p.name) AS label, s.created_at
		 FROM subscriptions s
		 LEFT JOIN lines l ON l.id = s.line_id
		 LEFT JOIN products p ON p.id = s.product_id
		 WHERE s.user_id = :userId
		 ORDER BY s.scope, label`,
		{ replacements: { userId }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ id: Number(r.id), scope: r.scope, targetId: Number(r.target_id), label: r.label, createdAt: r.created_at.toISOString() }));
}

/** The lines and (active) products one may follow. */
export async function listTargets(): Promise<{ lines: Target[]; products: Target[] }> {
	const [lines, products] = await Promise.all([
		db().query<{ id: string; label: string }>('SELECT id, name AS label FROM lines ORDER BY name', { type: QueryTypes.SELECT }),
		db().query<{ id: string; label: string }>("SELECT id, code || ' · ' || name AS label FROM products WHERE active ORDER BY code", {
			type: QueryTypes.SELECT
		})
	]);
	const plain = (r: { id: string; label: string }) => ({ id: Number(r.id), label: r.label });
	return { lines: lines.map(plain), products: products.map(plain) };
}

export type SubscribeResult = { ok: true; created: boolean } | { ok: false; field: 'line' | 'product'; message: string };

/** Follows a line or a product; following it twice is not an error (nothing changes). */
export async function subscribe(userId: number, scope: 'line' | 'product', targetId: number): Promise<SubscribeResult> {
	const table = scope === 'line' ? 'lines' : 'products';
	const exists = await db().query<{ id: string }>(`SELECT id FROM ${table} WHERE id = :targetId`, {
		replacements: { targetId },
		type: QueryTypes.SELECT
	});
	if (!exists[0]) return { ok: false, field: scope, message: scope === 'line' ? 'No such line' : 'No such product' };
	const column = scope === 'line' ? 'line_id' : 'product_id';
	const rows = await db().query<{ id: string }>(
		`INSERT INTO subscriptions (user_id, scope, ${column}) VALUES (:userId, :scope, :targetId)
		 ON CONFLICT DO NOTHING RETURNING id`,
		{ replacements: { userId, scope, targetId }, type: QueryTypes.SELECT }
	);
	return { ok: true, created: rows.length > 0 };
}

/** Stops one of one's own subscriptions; false when it is not there (or someone else's). */
export async function unsubscribe(userId: number, subscriptionId: number): Promise<boolean> {
	const rows = await db().query<{ id: string }>('DELETE FROM subscriptions WHERE id = :id AND user_id = :userId RETURNING id', {
		replacements: { id: subscriptionId, userId },
		type: QueryTypes.SELECT
	});
	return rows.length > 0;
}

function asDigest(n: number): DigestMinutes {
	return DIGEST_MINUTES.find((d) => d === n) ?? 0;
}

export async function getDigestMinutes(userId: number): Promise<DigestMinutes> {
	const rows = await db().query<{ alarm_digest_minutes: number }>('SELECT alarm_digest_minutes FROM users WHERE id = :userId', {
		replacements: { userId },
		type: QueryTypes.SELECT
	});
	return asDigest(rows[0]?.alarm_digest_minutes ?? 0);
}

/** Sets the digest; a pending digest keeps its due time, so the change shows from the next message on. */
export async function setDigestMinutes(userId: number, minutes: DigestMinutes): Promise<void> {
	await db().query('UPDATE users SET alarm_digest_minutes = :minutes WHERE id = :userId', { replacements: { minutes, userId } });
}
