import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { createStation } from '$lib/server/stations';
import { issueList } from '$lib/schemas/form';
import { StationBody } from '$lib/schemas/setup';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request, locals }) => {
	const user = requireApiArea(locals, 'stations.manage');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = StationBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await createStation({ userId: user.id, label: user.email }, parsed.data);
	if (!result.ok) return problem(409, result.message, { errors: [{ path: result.field, message: result.message }] });
	const s = result.station;
	return json({ id: s.id, name: s.name, line: s.line, fixture: s.fixture, token: result.token }, { status: 201 });
};
