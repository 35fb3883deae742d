import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { floorView } from '$lib/server/floor';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	requireApiArea(locals, 'floor');
	return json(await floorView());
};
