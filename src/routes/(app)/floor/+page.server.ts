import { requireArea } from '$lib/server/auth';
import { floorView } from '$lib/server/floor';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'floor');
	return { floor: await floorView() };
};
