import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { createStudy, listStudies } from '$lib/server/studies';
import { issueList } from '$lib/schemas/form';
import { StudyBody } from '$lib/schemas/studies';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	requireApiArea(locals, 'studies');
	return json({ studies: await listStudies() });
};

export const POST: RequestHandler = async ({ request, locals }) => {
	const user = requireApiArea(locals, 'studies.manage');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = StudyBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors; nothing was stored', { errors: issueList(parsed.error) });
	const result = await createStudy({ userId: user.id, label: user.email }, parsed.data);
	if (!result.ok) return problem(400, result.message, { errors: [{ path: result.field, message: result.message }] });
	return json(result.study, { status: 201 });
};
