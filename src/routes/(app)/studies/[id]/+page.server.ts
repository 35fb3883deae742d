import { error, fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { requireArea } from '$lib/server/auth';
import { getStudy, setStudyStatus } from '$lib/server/studies';
import { INTERACTION_ALPHA } from '$lib/server/study-analysis';
import { StudyId } from '$lib/schemas/studies';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

function idOf(params: { id: string }): number {
	const id = StudyId.safeParse(params.id);
	if (!id.success) error(404, 'No such study');
	return id.data;
}

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'studies');
	event.depends('app:study');
	const study = await getStudy(idOf(event.params));
	if (!study) error(404, 'No such study');
	return { study, alpha: INTERACTION_ALPHA, mayManage: mayUse(user.role, 'studies.manage') };
};

async function change(event: RequestEvent, status: 'running' | 'finished') {
	const user = requireArea(event, 'studies.manage');
	const result = await setStudyStatus({ userId: user.id, label: user.email }, idOf(event.params), status);
	if (!result.ok) return fail(result.status, { error: result.message });
	return { done: status === 'running' ? 'Study started: its stations now measure the parts it names.' : 'Study finished: the report is ready.' };
}

export const actions: Actions = {
	start: (event) => change(event, 'running'),
	finish: (event) => change(event, 'finished')
};
