import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { auditPage } from '$lib/server/audit-views';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import { AuditQuery } from '$lib/schemas/studies';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, url }) => {
	requireApiArea(locals, 'audit');
	const q = AuditQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	return json(await auditPage(q.data));
};
