import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { chartDetail } from '$lib/server/charts';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { ChartQuery, queryObject } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params, url }) => {
	requireApiArea(locals, 'charts');
	const q = ChartQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	const detail = await chartDetail(Number(params.id), q.data.view, q.data);
	if (!detail) error(404, 'No such chart');
	return json(detail);
};
