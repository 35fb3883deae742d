import { fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { acknowledgeAlarm, alarmFilterOptions, closeAlarm, listAlarmsForScreen } from '$lib/server/alarms';
import { requireArea } from '$lib/server/auth';
import { AcknowledgeAlarmForm, AlarmsPageQuery, CloseAlarmForm } from '$lib/schemas/charts-ui';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'alarms');
	const filter = AlarmsPageQuery.parse(queryObject(event.url.searchParams));
	const [alarms, options] = await Promise.all([listAlarmsForScreen(filter), alarmFilterOptions()]);
	return { alarms, options, filter, may: { acknowledge: mayUse(user.role, 'alarms.acknowledge'), close: mayUse(user.role, 'alarms.close') } };
};

export const actions: Actions = {
	acknowledge: async (event) => {
		const user = requireArea(event, 'alarms.acknowledge');
		const parsed = AcknowledgeAlarmForm.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'acknowledge', alarmId: null, errors: fieldErrors(parsed.error) });
		const result = await acknowledgeAlarm({ userId: user.id, label: user.email }, parsed.data.alarmId);
		if (!result.ok) return fail(result.status, { action: 'acknowledge', alarmId: parsed.data.alarmId, errors: { _: result.message } });
		return { action: 'acknowledge', alarmId: parsed.data.alarmId, done: 'Acknowledged' };
	},
	close: async (event) => {
		const user = requireArea(event, 'alarms.close');
		const values = formObject(await event.request.formData());
		const parsed = CloseAlarmForm.safeParse(values);
		const alarmId = Number(values.alarmId) || null;
		const keep = { cause: values.cause ?? '', action: values.action ?? '' };
		if (!parsed.success) return fail(400, { action: 'close', alarmId, errors: fieldErrors(parsed.error), values: keep });
		const result = await closeAlarm({ userId: user.id, label: user.email }, parsed.data.alarmId, parsed.data.cause, parsed.data.action);
		if (!result.ok) return fail(result.status, { action: 'close', alarmId, errors: { _: result.message }, values: keep });
		return { action: 'close', alarmId, done: 'Closed' };
	}
};
