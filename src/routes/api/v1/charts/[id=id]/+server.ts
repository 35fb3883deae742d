import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { chartColumnsJson, chartDetail } from '$lib/server/charts';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { ChartQuery, queryObject } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params, url }) => {
	requireApiArea(locals, 'charts');
	const q = ChartQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	if (q.data.shape === 'columns') {
		// The JSON text is built by the server module (point columns as PostgreSQL wrote them).
		const answer = await chartColumnsJson(Number(params.id), q.data.view, q.data);
		if (answer === null) error(404, 'No such chart');
		// Server-Timing (W3C): where the answer's time went, for benchmarks.
		const timing = Object.entries(answer.timings)
			.map(([name, ms]) => `${name};dur=${ms.toFixed(1)}`)
			.join(', ');
		return new Response(answer.body, { headers: { 'content-type': 'application/json', 'server-timing': timing } });
	}
	const detail = await chartDetail(Number(params.id), q.data.view, q.data);
	if (!detail) error(404, 'No such chart');
	return json(detail);
};
