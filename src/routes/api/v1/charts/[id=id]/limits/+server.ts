import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { recomputeLimits } from '$lib/server/charts';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { RecomputeLimitsBody } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

/** Recomputes a chart's limits from a chosen range with excluded points (engineer; audited). */
export const POST: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'charts.manage');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = RecomputeLimitsBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await recomputeLimits({ userId: user.id, label: user.email }, Number(params.id), parsed.data);
	if (!result.ok) return problem(result.status, result.message);
	return json(result, { status: 201 });
};
