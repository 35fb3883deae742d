// The append-only audit trail (the table refuses UPDATE and DELETE).
import type { Transaction } from 'sequelize';
import { db } from './db';

export type Actor = { userId: number | null; label: string };

/** Records who changed what, with the state before and after. */
export async function audit(
	actor: Actor,
	entity: string,
	entityId: string | number,
	action: string,
	before: unknown,
	after: unknown,
	transaction?: Transaction
): Promise<void> {
	await db().query(
		`INSERT INTO audit_entries (actor_user_id, actor, entity, entity_id, action, before, after)
		 VALUES (:userId, :label, :entity, :entityId, :action, :before, :after)`,
		{
			replacements: {
				userId: actor.userId,
				label: actor.label,
				entity,
				entityId: String(entityId),
				action,
				before: before === undefined || before === null ? null : JSON.stringify(before),
				after: after === undefined || after === null ? null : JSON.stringify(after)
			},
			transaction
		}
	);
}
