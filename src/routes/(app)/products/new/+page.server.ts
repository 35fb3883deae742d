import { fail, redirect } from '@sveltejs/kit';
import { requireArea } from '$lib/server/auth';
import { parsePlanForm, PLAN_DEFAULTS, planToValues, planValuesFromForm } from '$lib/server/plan-form';
import { createProduct } from '$lib/server/products';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { ProductHeadForm } from '$lib/schemas/plan-form';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	requireArea(event, 'products.manage');
	return { values: planToValues(null, 8), defaults: PLAN_DEFAULTS };
};

export const actions: Actions = {
	default: async (event) => {
		const user = requireArea(event, 'products.manage');
		const form = formObject(await event.request.formData());
		const head = ProductHeadForm.safeParse(form);
		const values = planValuesFromForm(form);
		const plan = parsePlanForm(values);
		const product = { code: form.code ?? '', name: form.name ?? '', family: form.family ?? '' };
		if (!head.success || !plan.ok) {
			const errors = { ...(head.success ? {} : fieldErrors(head.error)), ...(plan.ok ? {} : plan.errors) };
			return fail(400, { errors, values, product });
		}
		const result = await createProduct({ userId: user.id, label: user.email }, { ...head.data, plan: plan.plan });
		if (!result.ok) return fail(409, { errors: { [result.field]: result.message }, values, product });
		redirect(303, `/products/${encodeURIComponent(result.product.code)}?saved=1`);
	}
};
