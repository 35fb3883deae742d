import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { openLot } from '$lib/server/lots';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { LotBody } from '$lib/schemas/setup';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request, locals }) => {
	const user = requireApiArea(locals, 'lots.manage');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = LotBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await openLot({ userId: user.id, label: user.email }, parsed.data);
	if (!result.ok) {
		const status = result.field === 'number' ? 409 : 400;
		return problem(status, result.message, { errors: [{ path: result.field, message: result.message }] });
	}
	return json(result.lot, { status: 201 });
};
