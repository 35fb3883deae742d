import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { partDetail } from '$lib/server/parts';
import type { RequestHandler } from './$types';

/** One tested part in SI units: sweep, fit, judgement, plan windows and calibration used. */
export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'lots');
	const part = await partDetail(Number(params.id));
	if (!part) error(404, 'No such part');
	return json({ part });
};
