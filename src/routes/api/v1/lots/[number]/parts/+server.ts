import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { lotParts } from '$lib/server/lot-views';
import { getLot } from '$lib/server/lots';
import { problem } from '$lib/server/problem';
import { getProductByCode } from '$lib/server/products';
import { issueList } from '$lib/schemas/form';
import { PartsQuery } from '$lib/schemas/lots';
import { queryObject } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

/** The lot page's parts table as JSON: sorted, filtered, 50 a page by keyset cursor (`next`/`prev` go to `after`/`before`). */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	requireApiArea(locals, 'lots');
	const q = PartsQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	const lot = await getLot(params.number);
	if (!lot) error(404, `No lot ${params.number}`);
	const product = await getProductByCode(lot.productCode);
	const biasV = product?.plan.plan.points.map((p) => p.biasV) ?? [];
	return json({ biasV, ...(await lotParts(lot, biasV, q.data)) });
};
