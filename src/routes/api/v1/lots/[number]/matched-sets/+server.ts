import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { getLot } from '$lib/server/lots';
import { buildMatchedSets, lotSets } from '$lib/server/matched-sets';
import { problem, readJson } from '$lib/server/problem';
import { getProductByCode } from '$lib/server/products';
import { issueList } from '$lib/schemas/form';
import { MatchedSetsBody, SetsQuery } from '$lib/schemas/lots';
import { queryObject } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

/** The lot's current matched-set build and a page of its sets with members. */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	requireApiArea(locals, 'lots');
	const q = SetsQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	const lot = await getLot(params.number);
	if (!lot) error(404, `No lot ${params.number}`);
	return json(await lotSets(lot.id, q.data));
};

/** Builds sets from the lot's good parts (engineer, admin; audited); the new build becomes the lot's current one. */
export const POST: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'lots.disposition');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = MatchedSetsBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const lot = await getLot(params.number);
	const product = lot ? await getProductByCode(lot.productCode) : null;
	if (!lot || !product) error(404, `No lot ${params.number}`);
	const result = await buildMatchedSets({ userId: user.id, label: user.email }, lot, product.plan.plan, parsed.data.setSize, parsed.data.tolerancePct);
	if (!result.ok) return problem(result.status, result.message);
	return json({ build: result.build }, { status: 201 });
};
