import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { listProducts } from '$lib/server/catalog';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'products');
	return { products: await listProducts(), mayManage: mayUse(user.role, 'products.manage') };
};
