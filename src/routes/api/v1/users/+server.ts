import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { createUser } from '$lib/server/users';
import { issueList } from '$lib/schemas/form';
import { NewUserBody } from '$lib/schemas/people';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request, locals }) => {
	const admin = requireApiArea(locals, 'admin');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = NewUserBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await createUser({ userId: admin.id, label: admin.email }, parsed.data);
	if (!result.ok) return problem(409, result.message, { errors: [{ path: result.field, message: result.message }] });
	const { id, email, role } = result.user;
	return json({ id, email, role }, { status: 201 });
};
