import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { createProduct, listProductRecords } from '$lib/server/products';
import { issueList } from '$lib/schemas/form';
import { ProductBody } from '$lib/schemas/setup';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	requireApiArea(locals, 'products');
	return json({ products: await listProductRecords() });
};

export const POST: RequestHandler = async ({ request, locals }) => {
	const user = requireApiArea(locals, 'products.manage');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = ProductBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await createProduct({ userId: user.id, label: user.email }, parsed.data);
	if (!result.ok) return problem(409, result.message, { errors: [{ path: result.field, message: result.message }] });
	const p = result.product;
	return json({ id: p.id, code: p.code, name: p.name, family: p.family, planVersion: p.plan.version, plan: p.plan.plan }, { status: 201 });
};
