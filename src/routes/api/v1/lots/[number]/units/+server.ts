import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { getLot, lotUnits } from '$lib/server/lots';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { queryObject, UnitsQuery } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params, url }) => {
	requireApiArea(locals, 'lots');
	const q = UnitsQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	const lot = await getLot(params.number);
	if (!lot) error(404, `No lot ${params.number}`);
	return json(await lotUnits(lot.id, q.data));
};
