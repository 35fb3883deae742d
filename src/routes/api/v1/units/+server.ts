import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { partsBySerial } from '$lib/server/parts';
import { problem } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import { UnitsBySerialQuery } from '$lib/schemas/uploads';
import type { RequestHandler } from './$types';

/** Parts by serial (every test of it, newest first). */
export const GET: RequestHandler = async ({ locals, url }) => {
	requireApiArea(locals, 'lots');
	const q = UnitsBySerialQuery.safeParse(queryObject(url.searchParams));
	if (!q.success) return problem(400, 'Check the query parameters listed in errors', { errors: issueList(q.error) });
	return json({ units: await partsBySerial(q.data.serial) });
};
