import { fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { parseStationForm, stationToValues, stationValuesFromForm } from '$lib/server/plan-form';
import { lineNames, listStationsWithCalibration } from '$lib/server/setup-views';
import { createStation } from '$lib/server/stations';
import { formObject } from '$lib/schemas/form';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'stations');
	const [stations, lines] = await Promise.all([listStationsWithCalibration(new Date()), lineNames()]);
	return { stations, lines, mayManage: mayUse(user.role, 'stations.manage'), blank: stationToValues(null) };
};

export const actions: Actions = {
	create: async (event) => {
		const admin = requireArea(event, 'stations.manage');
		const values = stationValuesFromForm(formObject(await event.request.formData()));
		const parsed = parseStationForm(values);
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values });
		const result = await createStation({ userId: admin.id, label: admin.email }, parsed.station);
		if (!result.ok) return fail(409, { errors: { [result.field]: result.message }, values });
		return { created: { name: result.station.name, token: result.token } };
	}
};
