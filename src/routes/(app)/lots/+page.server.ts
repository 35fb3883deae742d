import { requireArea } from '$lib/server/auth';
import { listLots } from '$lib/server/catalog';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'lots');
	return { lots: await listLots() };
};
