import { error, fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { mailCertificate, QUALITY_STATEMENT } from '$lib/server/certificate';
import { lotPageView } from '$lib/server/lot-views';
import { getLot, setDisposition } from '$lib/server/lots';
import { buildMatchedSets } from '$lib/server/matched-sets';
import { getProductByCode } from '$lib/server/products';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { CertificateMailBody, DispositionBody, LotViewQuery, MatchedSetsBody, PartsQuery } from '$lib/schemas/lots';
import { queryObject } from '$lib/schemas/query';
import { LotNumberParam } from '$lib/schemas/plan-form';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'lots');
	const number = LotNumberParam.safeParse(event.params.number);
	if (!number.success) error(404, 'Lot not found');
	const params = queryObject(event.url.searchParams);
	const q = PartsQuery.safeParse(params);
	if (!q.success) error(400, `The parts table cannot show this: ${q.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
	const view = await lotPageView(number.data, q.data);
	if (!view) error(404, 'Lot not found');
	const options = LotViewQuery.parse(params);
	return {
		...view,
		query: { sort: q.data.sort, dir: q.data.dir, bin: q.data.bin ?? null, result: q.data.result ?? null, station: q.data.station ?? '', serial: q.data.serial ?? '', kind: q.data.kind },
		options: { cv: options.cv, cap: options.cap ?? view.characteristics[0]?.key ?? null },
		mayDecide: mayUse(user.role, 'lots.disposition'),
		qualityStatement: QUALITY_STATEMENT
	};
};

const actorOf = (u: { id: number; email: string }) => ({ userId: u.id, label: u.email });

async function decide(event: RequestEvent, disposition: 'held' | 'released') {
	const user = requireArea(event, 'lots.disposition');
	const form = formObject(await event.request.formData());
	const parsed = DispositionBody.safeParse({ ...form, disposition });
	if (!parsed.success) return fail(400, { action: 'disposition', errors: fieldErrors(parsed.error), values: { reason: form.reason ?? '' } });
	const result = await setDisposition(actorOf(user), event.params.number, disposition, parsed.data.reason);
	if (!result.ok) return fail(result.status, { action: 'disposition', errors: { reason: result.message }, values: { reason: form.reason ?? '' } });
	return { action: 'disposition', done: disposition === 'held' ? `Lot ${result.lot.number} is held.` : `Lot ${result.lot.number} is released.` };
}

export const actions: Actions = {
	hold: (event) => decide(event, 'held'),
	release: (event) => decide(event, 'released'),
	sets: async (event) => {
		const user = requireArea(event, 'lots.disposition');
		const form = formObject(await event.request.formData());
		const values = { setSize: form.setSize ?? '', tolerancePct: form.tolerancePct ?? '' };
		const parsed = MatchedSetsBody.safeParse(form);
		if (!parsed.success) return fail(400, { action: 'sets', errors: fieldErrors(parsed.error), values });
		const lot = await getLot(event.params.number);
		const product = lot ? await getProductByCode(lot.productCode) : null;
		if (!lot || !product) error(404, 'Lot not found');
		const result = await buildMatchedSets(actorOf(user), lot, product.plan.plan, parsed.data.setSize, parsed.data.tolerancePct);
		if (!result.ok) return fail(result.status, { action: 'sets', errors: { setSize: result.message }, values });
		return { action: 'sets', done: `${result.build.setCount} sets of ${result.build.setSize} from ${result.build.candidates} good parts.` };
	},
	mail: async (event) => {
		const user = requireArea(event, 'lots.disposition');
		const form = formObject(await event.request.formData());
		const values = { to: form.to ?? '', contact: form.contact ?? '', note: form.note ?? '' };
		const parsed = CertificateMailBody.safeParse(form);
		if (!parsed.success) return fail(400, { action: 'mail', errors: fieldErrors(parsed.error), values });
		const result = await mailCertificate(user, event.params.number, parsed.data, new Date());
		if (!result.ok) return fail(result.status, { action: 'mail', errors: { to: result.message }, values });
		return { action: 'mail', done: `The certificate is on its way to ${parsed.data.to}.` };
	}
};
