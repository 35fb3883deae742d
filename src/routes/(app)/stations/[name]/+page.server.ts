import { error, fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { parseStationForm, stationToValues, stationValuesFromForm } from '$lib/server/plan-form';
import { stationPage } from '$lib/server/setup-views';
import { stationTrends } from '$lib/server/station-view';
import { loadLotOnStation } from '$lib/server/setup-writes';
import { getStationByName, revokeToken, rotateToken, updateStation } from '$lib/server/stations';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { LoadLotForm, StationNameParam } from '$lib/schemas/plan-form';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

async function stationOf(event: RequestEvent) {
	const name = StationNameParam.safeParse(event.params.name);
	const station = name.success ? await getStationByName(name.data) : null;
	if (!station) error(404, 'Station not found');
	return station;
}

const actorOf = (u: { id: number; email: string }) => ({ userId: u.id, label: u.email });

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'stations');
	const name = StationNameParam.safeParse(event.params.name);
	const view = name.success ? await stationPage(name.data, new Date()) : null;
	if (!view) error(404, 'Station not found');
	return {
		...view,
		trends: await stationTrends(view.station.id, new Date()),
		values: stationToValues(view.station),
		mayManage: mayUse(user.role, 'stations.manage'),
		mayLoadLots: mayUse(user.role, 'lots.manage')
	};
};

export const actions: Actions = {
	update: async (event) => {
		const admin = requireArea(event, 'stations.manage');
		const station = await stationOf(event);
		const values = stationValuesFromForm(formObject(await event.request.formData()));
		const parsed = parseStationForm(values, station.name);
		if (!parsed.ok) return fail(400, { action: 'update', errors: parsed.errors, values });
		const result = await updateStation(actorOf(admin), station.id, parsed.station);
		if (!result.ok) error(404, result.message);
		return { action: 'update', done: 'Fixture and policy saved. The next calibration is checked against them.' };
	},
	rotate: async (event) => {
		const admin = requireArea(event, 'stations.manage');
		const station = await stationOf(event);
		const result = await rotateToken(actorOf(admin), station.id);
		if (!result.ok) error(404, result.message);
		return { action: 'token', token: result.token };
	},
	revoke: async (event) => {
		const admin = requireArea(event, 'stations.manage');
		const station = await stationOf(event);
		const form = formObject(await event.request.formData());
		if (form.confirm !== 'yes') return fail(400, { action: 'token', errors: { token: 'Confirm that the station should stop posting' } });
		const result = await revokeToken(actorOf(admin), station.id);
		if (!result.ok) error(404, result.message);
		return { action: 'token', done: 'Token revoked. The station is refused from its next request on.' };
	},
	assign: async (event) => {
		const user = requireArea(event, 'lots.manage');
		const station = await stationOf(event);
		const parsed = LoadLotForm.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'assign', errors: { lot: fieldErrors(parsed.error).lot ?? 'Choose a lot' } });
		const result = await loadLotOnStation(actorOf(user), station, parsed.data.lot);
		if (!result.ok) return fail(409, { action: 'assign', errors: { lot: result.message } });
		return { action: 'assign', done: parsed.data.lot ? `Lot ${parsed.data.lot} loaded.` : 'Station unloaded.' };
	}
};
