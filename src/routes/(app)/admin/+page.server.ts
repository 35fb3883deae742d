import { fail } from '@sveltejs/kit';
import { requireArea } from '$lib/server/auth';
import { changeRole, createUser, listUsers, setActive, setPasswordByAdmin } from '$lib/server/users';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { ChangeRoleBody, NewUserBody, SetPasswordBody, UserIdBody } from '$lib/schemas/people';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'admin');
	return { users: await listUsers() };
};

const actorOf = (u: { id: number; email: string }) => ({ userId: u.id, label: u.email });

export const actions: Actions = {
	create: async (event) => {
		const admin = requireArea(event, 'admin');
		const values = formObject(await event.request.formData());
		const parsed = NewUserBody.safeParse(values);
		const keep = { email: values.email ?? '', name: values.name ?? '', role: values.role ?? 'operator' };
		if (!parsed.success) return fail(400, { action: 'create', errors: fieldErrors(parsed.error), values: keep });
		const result = await createUser(actorOf(admin), parsed.data);
		if (!result.ok) return fail(409, { action: 'create', errors: { [result.field]: result.message }, values: keep });
		return { action: 'create', done: `${result.user.name} can now sign in as ${result.user.role}.` };
	},
	role: async (event) => {
		const admin = requireArea(event, 'admin');
		const parsed = ChangeRoleBody.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'row', errors: fieldErrors(parsed.error) });
		const result = await changeRole(actorOf(admin), parsed.data.userId, parsed.data.role);
		if (!result.ok) return fail(409, { action: 'row', userId: parsed.data.userId, errors: { row: result.message } });
		return { action: 'row', userId: parsed.data.userId, done: 'Role changed.' };
	},
	deactivate: async (event) => {
		const admin = requireArea(event, 'admin');
		const parsed = UserIdBody.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'row', errors: fieldErrors(parsed.error) });
		const result = await setActive(actorOf(admin), parsed.data.userId, false);
		if (!result.ok) return fail(409, { action: 'row', userId: parsed.data.userId, errors: { row: result.message } });
		return { action: 'row', userId: parsed.data.userId, done: 'Deactivated; their sessions have ended.' };
	},
	reactivate: async (event) => {
		const admin = requireArea(event, 'admin');
		const parsed = UserIdBody.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'row', errors: fieldErrors(parsed.error) });
		const result = await setActive(actorOf(admin), parsed.data.userId, true);
		if (!result.ok) return fail(409, { action: 'row', userId: parsed.data.userId, errors: { row: result.message } });
		return { action: 'row', userId: parsed.data.userId, done: 'Reactivated.' };
	},
	password: async (event) => {
		const admin = requireArea(event, 'admin');
		const values = formObject(await event.request.formData());
		const parsed = SetPasswordBody.safeParse(values);
		const userId = Number(values.userId);
		if (!parsed.success) return fail(400, { action: 'row', userId, errors: { row: fieldErrors(parsed.error).password ?? 'Check the password' } });
		const result = await setPasswordByAdmin(actorOf(admin), parsed.data.userId, parsed.data.password);
		if (!result.ok) return fail(409, { action: 'row', userId, errors: { row: result.message } });
		return { action: 'row', userId, done: 'New password set; hand it over in person.' };
	}
};
