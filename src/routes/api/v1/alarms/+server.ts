import { json } from '@sveltejs/kit';
import { listAlarms } from '$lib/server/alarms';
import { requireApiArea } from '$lib/server/auth';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { AlarmsQuery, queryObject } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, url }) => {
	requireApiArea(locals, 'alarms');
	const q = AlarmsQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	return json({ alarms: await listAlarms(q.data) });
};
