import { json } from '@sveltejs/kit';
import { requireStation } from '$lib/server/auth';
import { stationView } from '$lib/server/station-view';
import { studyForStation } from '$lib/server/studies';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals }) => {
	const station = requireStation(locals);
	const [view, study] = await Promise.all([stationView(station.id, new Date()), studyForStation(station.id)]);
	// `study`: null, or the running study this station takes part in and the part it measures next.
	return json(view ? { ...view, study } : view);
};
