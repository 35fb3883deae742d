import { error, fail, redirect } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { parsePlanForm, PLAN_DEFAULTS, planToValues, planValuesFromForm } from '$lib/server/plan-form';
import { savePlan } from '$lib/server/setup-writes';
import { productPage } from '$lib/server/setup-views';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { PlanNoteForm, ProductCodeParam } from '$lib/schemas/plan-form';
import type { Actions, PageServerLoad } from './$types';

function codeOf(param: string): string {
	const code = ProductCodeParam.safeParse(param);
	if (!code.success) error(404, 'Product not found');
	return code.data;
}

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'products');
	const view = await productPage(codeOf(event.params.code));
	if (!view) error(404, 'Product not found');
	const saved = Number(event.url.searchParams.get('saved'));
	return {
		...view,
		mayManage: mayUse(user.role, 'products.manage'),
		values: planToValues(view.product.plan.plan),
		defaults: PLAN_DEFAULTS,
		saved: Number.isInteger(saved) && saved > 0 ? saved : null
	};
};

export const actions: Actions = {
	save: async (event) => {
		const user = requireArea(event, 'products.manage');
		const code = codeOf(event.params.code);
		const form = formObject(await event.request.formData());
		const values = planValuesFromForm(form);
		const plan = parsePlanForm(values);
		const note = PlanNoteForm.safeParse(form);
		if (!plan.ok || !note.success) {
			const errors = { ...(plan.ok ? {} : plan.errors), ...(note.success ? {} : fieldErrors(note.error)) };
			return fail(400, { errors, values });
		}
		const result = await savePlan({ userId: user.id, label: user.email }, code, plan.plan, note.data.note);
		if (!result.ok) error(404, result.message);
		if (!result.changed) return { unchanged: true, version: result.product.plan.version };
		redirect(303, `/products/${encodeURIComponent(result.product.code)}?saved=${result.product.plan.version}`);
	}
};
