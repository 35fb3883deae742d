import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { lotSummary, setDisposition } from '$lib/server/lots';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { DispositionBody } from '$lib/schemas/lots';
import type { RequestHandler } from './$types';

/** Hold or release the lot with a reason (engineer, admin; audited with before and after). */
export const POST: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'lots.disposition');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = DispositionBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await setDisposition({ userId: user.id, label: user.email }, params.number, parsed.data.disposition, parsed.data.reason);
	if (!result.ok) return problem(result.status, result.message, result.status === 409 ? { kind: 'lot-disposition' } : {});
	return json(await lotSummary(params.number));
};
