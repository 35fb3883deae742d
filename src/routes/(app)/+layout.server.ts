import { requireArea } from '$lib/server/auth';
import { navFor } from '$lib/nav';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = (event) => {
	const user = requireArea(event, 'account');
	return { user, nav: navFor(user.role) };
};
