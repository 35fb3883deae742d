import { fail, redirect } from '@sveltejs/kit';
import { requireArea } from '$lib/server/auth';
import { listLots, listProducts, listStations } from '$lib/server/catalog';
import { createStudy, listStudies } from '$lib/server/studies';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { StudyBody, StudyForm } from '$lib/schemas/studies';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'studies');
	const [studies, products, lots, stations] = await Promise.all([listStudies(), listProducts(), listLots(), listStations()]);
	return {
		studies,
		products: products.map((p) => ({ code: p.code, name: p.name })),
		lots: lots.map((l) => ({ number: l.number, productCode: l.productCode })),
		stations: stations.filter((s) => s.active).map((s) => ({ name: s.name, line: s.line }))
	};
};

export const actions: Actions = {
	create: async (event) => {
		const user = requireArea(event, 'studies.manage');
		const data = await event.request.formData();
		const form = formObject(data);
		const stations = data.getAll('stations').filter((s): s is string => typeof s === 'string');
		const values = { productCode: form.productCode ?? '', name: form.name ?? '', lot: form.lot ?? '', serials: form.serials ?? '', stations, trials: form.trials ?? '3', multiplier: form.multiplier ?? '6' };
		const parsedForm = StudyForm.safeParse({ ...form, stations });
		if (!parsedForm.success) return fail(400, { errors: fieldErrors(parsedForm.error), values });
		const f = parsedForm.data;
		const body = StudyBody.safeParse({ productCode: f.productCode, name: f.name, parts: f.serials.map((serial) => ({ serial, lot: f.lot })), stations: f.stations, trials: f.trials, multiplier: f.multiplier });
		if (!body.success) {
			// Map the body's paths back onto the form's fields.
			const errors: Record<string, string> = {};
			for (const [path, message] of Object.entries(fieldErrors(body.error))) {
				const field = path.startsWith('parts') ? 'serials' : path.split('.')[0] ?? '_';
				errors[field] ??= message;
			}
			return fail(400, { errors, values });
		}
		const result = await createStudy({ userId: user.id, label: user.email }, body.data);
		if (!result.ok) {
			const field = result.field.startsWith('parts') ? (result.field.endsWith('lot') ? 'lot' : 'serials') : result.field.split('.')[0] ?? '_';
			return fail(400, { errors: { [field]: result.message }, values });
		}
		redirect(303, `/studies/${result.study.id}`);
	}
};
