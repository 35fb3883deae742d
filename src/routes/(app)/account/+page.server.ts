import { fail } from '@sveltejs/kit';
import { readSessionToken, requireArea, SESSION_COOKIE, sha256 } from '$lib/server/auth';
import { changePassword } from '$lib/server/users';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { ChangePasswordBody } from '$lib/schemas/people';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	requireArea(event, 'account');
	return {};
};

export const actions: Actions = {
	password: async (event) => {
		const user = requireArea(event, 'account');
		const parsed = ChangePasswordBody.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error) });
		const token = event.cookies.get(SESSION_COOKIE);
		const sid = token ? await readSessionToken(token) : null;
		const result = await changePassword({ userId: user.id, label: user.email }, parsed.data.current, parsed.data.password, sid ? sha256(sid) : null);
		if (!result.ok) return fail(400, { errors: { [result.field]: result.message } });
		return { done: 'Password changed. Your other sessions have been signed out.' };
	}
};
