import { error, json } from '@sveltejs/kit';
import { acknowledgeAlarm, closeAlarm, getAlarm } from '$lib/server/alarms';
import { requireApiArea } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { AlarmChangeBody } from '$lib/schemas/query';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'alarms');
	const alarm = await getAlarm(Number(params.id));
	if (!alarm) error(404, 'No such alarm');
	return json({ alarm });
};

/** `{ "status": "acknowledged" }` (operator and up) or `{ "status": "closed", "cause", "action" }` (engineer and up). */
export const PATCH: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'alarms.acknowledge');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = AlarmChangeBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const actor = { userId: user.id, label: user.email };
	let result;
	if (parsed.data.status === 'closed') {
		requireApiArea(locals, 'alarms.close');
		result = await closeAlarm(actor, Number(params.id), parsed.data.cause, parsed.data.action);
	} else {
		result = await acknowledgeAlarm(actor, Number(params.id));
	}
	if (!result.ok) return problem(result.status, result.message);
	return json({ alarm: result.alarm });
};
