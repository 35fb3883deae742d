import { error } from '@sveltejs/kit';
import { requireArea } from '$lib/server/auth';
import { lotPage } from '$lib/server/setup-views';
import { LotNumberParam } from '$lib/schemas/plan-form';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'lots');
	const number = LotNumberParam.safeParse(event.params.number);
	const view = number.success ? await lotPage(number.data, 100) : null;
	if (!view) error(404, 'Lot not found');
	return view;
};
