import { requireArea } from '$lib/server/auth';
import { listProducts } from '$lib/server/catalog';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'products');
	return { products: await listProducts() };
};
