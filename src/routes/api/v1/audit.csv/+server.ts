import { requireApiArea } from '$lib/server/auth';
import { auditCsv } from '$lib/server/audit-views';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import { AuditQuery } from '$lib/schemas/studies';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, url }) => {
	requireApiArea(locals, 'audit');
	const q = AuditQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	return new Response(await auditCsv(q.data), {
		headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': 'attachment; filename="audit-trail.csv"' }
	});
};
