import { fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { listProducts } from '$lib/server/catalog';
import { openLot, setLotStatus } from '$lib/server/lots';
import { listLotsWithYield } from '$lib/server/setup-views';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { LotNumberForm, LotOpenForm } from '$lib/schemas/plan-form';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'lots');
	const [lots, products] = await Promise.all([listLotsWithYield(), listProducts()]);
	return { lots, products: products.map((p) => ({ code: p.code, name: p.name })), mayManage: mayUse(user.role, 'lots.manage') };
};

const actorOf = (u: { id: number; email: string }) => ({ userId: u.id, label: u.email });

async function setStatus(event: RequestEvent, user: { id: number; email: string }, status: 'open' | 'closed') {
	const parsed = LotNumberForm.safeParse(formObject(await event.request.formData()));
	if (!parsed.success) return fail(400, { action: 'status', errors: fieldErrors(parsed.error) });
	const result = await setLotStatus(actorOf(user), parsed.data.number, status);
	if (!result.ok) return fail(409, { action: 'status', number: parsed.data.number, errors: { number: result.message } });
	return { action: 'status', number: parsed.data.number, done: `Lot ${parsed.data.number} ${status === 'closed' ? 'closed: stations can no longer post into it' : 'reopened'}.` };
}

export const actions: Actions = {
	open: async (event) => {
		const user = requireArea(event, 'lots.manage');
		const form = formObject(await event.request.formData());
		const values = { number: form.number ?? '', productCode: form.productCode ?? '', quantity: form.quantity ?? '' };
		const parsed = LotOpenForm.safeParse(form);
		if (!parsed.success) return fail(400, { action: 'open', errors: fieldErrors(parsed.error), values });
		const result = await openLot(actorOf(user), parsed.data);
		if (!result.ok) return fail(409, { action: 'open', errors: { [result.field]: result.message }, values });
		return { action: 'open', done: `Lot ${result.lot.number} is open for ${result.lot.productCode}. Load it onto a station to start testing.` };
	},
	close: (event) => setStatus(event, requireArea(event, 'lots.manage'), 'closed'),
	reopen: (event) => setStatus(event, requireArea(event, 'lots.manage'), 'open')
};
