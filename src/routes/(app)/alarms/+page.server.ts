import { requireArea } from '$lib/server/auth';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	requireArea(event, 'alarms');
	return {};
};
