import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { getStudy, setStudyStatus } from '$lib/server/studies';
import { issueList } from '$lib/schemas/form';
import { StudyId, StudyPatchBody } from '$lib/schemas/studies';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'studies');
	const id = StudyId.safeParse(params.id);
	if (!id.success) return problem(400, 'Study ids are whole numbers', { errors: [{ path: 'id', message: 'not a study id' }] });
	const study = await getStudy(id.data);
	if (!study) return problem(404, `No study ${id.data}`);
	return json(study);
};

export const PATCH: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'studies.manage');
	const id = StudyId.safeParse(params.id);
	if (!id.success) return problem(400, 'Study ids are whole numbers', { errors: [{ path: 'id', message: 'not a study id' }] });
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = StudyPatchBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors; nothing was changed', { errors: issueList(parsed.error) });
	const result = await setStudyStatus({ userId: user.id, label: user.email }, id.data, parsed.data.status);
	if (!result.ok) return problem(result.status, result.message);
	return json(result.study);
};
