// Queues alarm e-mail for everyone who follows the alarm's line or product. Called once an alarm
// opens, ideally inside the alarm's own transaction: the queue row then commits with the alarm and
// the sender (sender.ts) sends it only after that commit.
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db';
import { AlarmMailSchema, type AlarmMail } from './types';

export type { AlarmMail } from './types';

/** After this many failed attempts a message is given up (it stays in the table with its last error). */
export const MAX_ATTEMPTS = 8;

// Namespace of the per-person advisory lock that serialises digest merging (two-key form, so it
// never meets the migrations' one-key lock).
const DIGEST_LOCK_NS = 4_207_732;

type Recipient = { id: string; email: string; alarm_digest_minutes: number };

export type QueueOptions = {
	/** The caller's transaction (the one that opens the alarm); without it, one of our own. */
	transaction?: Transaction;
	/** The time the alarm is queued (tests pass it); defaults to the clock. */
	now?: Date;
};

/**
 * Queues the alarm for every active person subscribed to its line or its product, once per person
 * even when both match. No digest: one row due now. A digest of N minutes: the alarm joins the
 * person's pending digest, or opens one due N minutes from now. Calling it again for the same
 * alarm queues nothing new. Returns how many people it queued mail for. Throws on a malformed alarm.
 */
export async function queueAlarmMail(alarm: AlarmMail, options: QueueOptions = {}): Promise<number> {
	const data = AlarmMailSchema.parse(alarm);
	const now = options.now ?? new Date();
	const work = async (transaction: Transaction) => {
		const recipients = await db().query<Recipient>(
			`SELECT DISTINCT u.id, u.email, u.alarm_digest_minutes
			 FROM subscriptions s JOIN users u ON u.id = s.user_id
			 WHERE u.active
			   AND ((s.scope = 'line' AND s.line_id = :lineId) OR (s.scope = 'product' AND s.product_id = :productId))
			   AND NOT EXISTS (
			     SELECT 1 FROM mail_queue q WHERE q.user_id = u.id AND q.payload -> 'alarms' @> CAST(:probe AS jsonb))
			 ORDER BY u.id`,
			{
				replacements: { lineId: data.lineId, productId: data.productId, probe: JSON.stringify([{ alarmId: data.alarmId }]) },
				type: QueryTypes.SELECT,
				transaction
			}
		);
		for (const r of recipients) {
			const userId = Number(r.id);
			if (r.alarm_digest_minutes <= 0) {
				await insertRow(transaction, userId, r.email, 'alarm', [data], now);
				continue;
			}
			await db().query('SELECT pg_advisory_xact_lock(:ns, CAST(:uid % 2147483647 AS integer))', {
				replacements: { ns: DIGEST_LOCK_NS, uid: userId },
				transaction
			});
			// A digest the sender is sending right now is locked: skip it and open a new one.
			const pending = await db().query<{ id: string }>(
				`SELECT id FROM mail_queue
				 WHERE user_id = :userId AND kind = 'digest' AND sent_at IS NULL AND attempts < :max
				 ORDER BY id LIMIT 1 FOR UPDATE SKIP LOCKED`,
				{ replacements: { userId, max: MAX_ATTEMPTS }, type: QueryTypes.SELECT, transaction }
			);
			const row = pending[0];
			if (row) {
				await db().query(
					`UPDATE mail_queue SET payload = jsonb_set(payload, '{alarms}', (payload -> 'alarms') || CAST(:alarm AS jsonb))
					 WHERE id = :id`,
					{ replacements: { id: row.id, alarm: JSON.stringify([data]) }, transaction }
				);
			} else {
				await insertRow(transaction, userId, r.email, 'digest', [data], new Date(now.getTime() + r.alarm_digest_minutes * 60_000));
			}
		}
		return recipients.length;
	};
	return options.transaction ? work(options.transaction) : db().transaction(work);
}

async function insertRow(transaction: Transaction, userId: number, to: string, kind: 'alarm' | 'digest', alarms: AlarmMail[], dueAt: Date) {
	await db().query(
		`INSERT INTO mail_queue (user_id, to_address, kind, payload, due_at)
		 VALUES (:userId, :to, :kind, CAST(:payload AS jsonb), :dueAt)`,
		{ replacements: { userId, to, kind, payload: JSON.stringify({ alarms }), dueAt }, transaction }
	);
}
