import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { listCharts } from '$lib/server/charts';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { ChartsQuery, queryObject } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, url }) => {
	requireApiArea(locals, 'charts');
	const q = ChartsQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	return json({ charts: await listCharts(q.data) });
};
