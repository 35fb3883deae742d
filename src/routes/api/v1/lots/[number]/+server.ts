import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { lotSummary } from '$lib/server/lots';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'lots');
	const summary = await lotSummary(params.number);
	if (!summary) error(404, `No lot ${params.number}`);
	return json(summary);
};
