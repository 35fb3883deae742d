import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { lotSummary, setLotStatus } from '$lib/server/lots';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { LotStatusBody } from '$lib/schemas/setup';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'lots');
	const summary = await lotSummary(params.number);
	if (!summary) error(404, `No lot ${params.number}`);
	return json(summary);
};

export const PATCH: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'lots.manage');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = LotStatusBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await setLotStatus({ userId: user.id, label: user.email }, params.number, parsed.data.status);
	if (!result.ok) return problem(result.message === 'No such lot' ? 404 : 409, result.message);
	const summary = await lotSummary(params.number);
	return json(summary);
};
