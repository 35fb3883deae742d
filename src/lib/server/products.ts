// Products and their versioned spec plans. Every change to a plan is a new version with an
// audit entry; a part is judged by the version in force when it was tested.
import { QueryTypes, UniqueConstraintError, type Transaction } from 'sequelize';
import type { SpecPlan } from '$lib/measure/types';
import { audit, type Actor } from './audit';
import { db } from './db';

export type PlanVersion = { id: number; version: number; plan: SpecPlan; note: string; createdAt: string; createdBy: string | null };
export type ProductRecord = { id: number; code: string; name: string; family: string; active: boolean; plan: PlanVersion };

type Row = {
	id: string;
	code: string;
	name: string;
	family: string;
	active: boolean;
	plan_id: string;
	version: number;
	plan: SpecPlan;
	note: string;
	created_at: Date;
	created_by: string | null;
};

const SELECT = `SELECT p.id, p.code, p.name, p.family, p.active, v.id AS plan_id, v.version, v.plan, v.note, v.created_at, u.email AS created_by
	FROM products p
	JOIN LATERAL (SELECT * FROM plan_versions WHERE product_id = p.id ORDER BY version DESC LIMIT 1) v ON true
	LEFT JOIN users u ON u.id = v.created_by`;

function plain(r: Row): ProductRecord {
	return {
		id: Number(r.id),
		code: r.code,
		name: r.name,
		family: r.family,
		active: r.active,
		plan: { id: Number(r.plan_id), version: r.version, plan: r.plan, note: r.note, createdAt: r.created_at.toISOString(), createdBy: r.created_by }
	};
}

export async function getProductByCode(code: string, transaction?: Transaction): Promise<ProductRecord | null> {
	const rows = await db().query<Row>(`${SELECT} WHERE lower(p.code) = lower(:code)`, { replacements: { code }, type: QueryTypes.SELECT, transaction });
	return rows[0] ? plain(rows[0]) : null;
}

export async function getProduct(id: number, transaction?: Transaction): Promise<ProductRecord | null> {
	const rows = await db().query<Row>(`${SELECT} WHERE p.id = :id`, { replacements: { id }, type: QueryTypes.SELECT, transaction });
	return rows[0] ? plain(rows[0]) : null;
}

export async function listProductRecords(): Promise<ProductRecord[]> {
	const rows = await db().query<Row>(`${SELECT} ORDER BY p.code`, { type: QueryTypes.SELECT });
	return rows.map(plain);
}

export async function planHistory(productId: number): Promise<PlanVersion[]> {
	const rows = await db().query<Omit<Row, 'code' | 'name' | 'family' | 'active' | 'plan_id'> & { id: string }>(
		`SELECT v.id, v.version, v.plan, v.note, v.created_at, u.email AS created_by FROM plan_versions v
		 LEFT JOIN users u ON u.id = v.created_by WHERE v.product_id = :productId ORDER BY v.version DESC`,
		{ replacements: { productId }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ id: Number(r.id), version: r.version, plan: r.plan, note: r.note, createdAt: r.created_at.toISOString(), createdBy: r.created_by }));
}

/** JSON with object keys sorted, so a plan read back from jsonb (which reorders keys) compares equal. */
export function canonicalJson(value: unknown): string {
	return JSON.stringify(value, (_key, v: unknown) =>
		v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v).sort(([a], [b]) => a.localeCompare(b))) : v
	);
}

export type CreateProductResult = { ok: true; product: ProductRecord } | { ok: false; field: string; message: string };

/** Adds a product with plan version 1. The plan is assumed validated (SpecPlanSchema). */
export async function createProduct(actor: Actor, input: { code: string; name: string; family?: string; plan: SpecPlan }): Promise<CreateProductResult> {
	try {
		return await db().transaction(async (t) => {
			const rows = await db().query<{ id: string }>('INSERT INTO products (code, name, family) VALUES (:code, :name, :family) RETURNING id', {
				replacements: { code: input.code, name: input.name, family: input.family ?? '' },
				type: QueryTypes.SELECT,
				transaction: t
			});
			const id = Number(rows[0]?.id);
			await db().query("INSERT INTO plan_versions (product_id, version, plan, note, created_by) VALUES (:id, 1, :plan, 'First plan', :by)", {
				replacements: { id, plan: JSON.stringify(input.plan), by: actor.userId },
				transaction: t
			});
			const product = await getProduct(id, t);
			if (!product) throw new Error('product vanished inside its own transaction');
			await audit(actor, 'product', id, 'create', null, { code: input.code, name: input.name, plan: input.plan }, t);
			return { ok: true as const, product };
		});
	} catch (e) {
		if (e instanceof UniqueConstraintError) return { ok: false, field: 'code', message: 'A product with this code already exists' };
		throw e;
	}
}

/** Stores a changed plan as the next version (nothing when it equals the current one). */
export async function changePlan(
	actor: Actor,
	productId: number,
	plan: SpecPlan,
	note: string
): Promise<{ ok: true; product: ProductRecord; changed: boolean } | { ok: false; message: string }> {
	return db().transaction(async (t) => {
		// Lock the product so two engineers saving at once get versions n+1 and n+2, not a clash.
		const locked = await db().query('SELECT id FROM products WHERE id = :id FOR UPDATE', { replacements: { id: productId }, type: QueryTypes.SELECT, transaction: t });
		if (locked.length === 0) return { ok: false as const, message: 'No such product' };
		const before = await getProduct(productId, t);
		if (!before) return { ok: false as const, message: 'No such product' };
		if (canonicalJson(before.plan.plan) === canonicalJson(plan)) return { ok: true as const, product: before, changed: false };
		await db().query('INSERT INTO plan_versions (product_id, version, plan, note, created_by) VALUES (:id, :v, :plan, :note, :by)', {
			replacements: { id: productId, v: before.plan.version + 1, plan: JSON.stringify(plan), note, by: actor.userId },
			transaction: t
		});
		const after = await getProduct(productId, t);
		if (!after) throw new Error('product vanished inside its own transaction');
		await audit(actor, 'plan', productId, `version ${after.plan.version}`, { version: before.plan.version, plan: before.plan.plan }, { version: after.plan.version, plan, note }, t);
		return { ok: true as const, product: after, changed: true };
	});
}
