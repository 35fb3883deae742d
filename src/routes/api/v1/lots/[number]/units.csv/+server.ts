import { error } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { getLot, lotUnits } from '$lib/server/lots';
import { unitsCsv } from '$lib/server/csv';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { queryObject, UnitsQuery } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params, url }) => {
	requireApiArea(locals, 'lots');
	const q = UnitsQuery.extend({ limit: UnitsQuery.shape.limit.unwrap().max(100_000).default(100_000) }).safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	const lot = await getLot(params.number);
	if (!lot) error(404, `No lot ${params.number}`);
	const page = await lotUnits(lot.id, q.data);
	return new Response(unitsCsv(page.units), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${lot.number.replace(/[^A-Za-z0-9._-]/g, '_')}-units.csv"`
		}
	});
};
