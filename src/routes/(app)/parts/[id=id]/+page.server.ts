import { error } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { partDetail } from '$lib/server/parts';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'lots');
	const part = await partDetail(Number(event.params.id));
	if (!part) error(404, 'Part not found');
	return { part, mayCharts: mayUse(user.role, 'charts') };
};
