// Writes behind the set-up forms that need a step around the lead's server functions.
import type { SpecPlan } from '$lib/measure/types';
import type { Actor } from './audit';
import { getLot } from './lots';
import { alignPlan } from './plan-form';
import { changePlan, getProductByCode, type ProductRecord } from './products';
import { assignLot, type StationRecord } from './stations';

export type SavePlanResult = { ok: true; product: ProductRecord; changed: boolean } | { ok: false; message: string };

/**
 * Saves a plan typed in the editor as the product's next version. The plan is aligned with the
 * stored one first (unchanged numbers as stored, keys in jsonb order) so that saving an unchanged
 * plan is recognised as such by changePlan() and makes no version.
 */
export async function savePlan(actor: Actor, code: string, plan: SpecPlan, note: string): Promise<SavePlanResult> {
	const product = await getProductByCode(code);
	if (!product) return { ok: false, message: 'No such product' };
	return changePlan(actor, product.id, alignPlan(plan, product.plan.plan), note || 'Plan changed');
}

/** Loads an open lot onto a station ('' unloads it). A closed or unknown lot is refused. */
export async function loadLotOnStation(actor: Actor, station: StationRecord, lotNumber: string): Promise<{ ok: true } | { ok: false; message: string }> {
	if (lotNumber === '') {
		await assignLot(actor, station.id, null);
		return { ok: true };
	}
	const lot = await getLot(lotNumber);
	if (!lot) return { ok: false, message: 'No lot with this number' };
	if (lot.status !== 'open') return { ok: false, message: 'This lot is closed; reopen it first' };
	await assignLot(actor, station.id, lot.id);
	return { ok: true };
}
