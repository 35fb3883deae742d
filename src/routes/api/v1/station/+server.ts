import { json } from '@sveltejs/kit';
import { requireStation } from '$lib/server/auth';
import { stationView } from '$lib/server/station-view';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	const station = requireStation(locals);
	return json(await stationView(station.id, new Date()));
};
