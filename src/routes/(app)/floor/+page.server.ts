import { requireArea } from '$lib/server/auth';
import { listStations } from '$lib/server/catalog';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'floor');
	return { stations: await listStations() };
};
