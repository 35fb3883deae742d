import { redirect } from '@sveltejs/kit';
import { closeSession, cookieOptions, SESSION_COOKIE } from '$lib/server/auth';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = () => redirect(303, '/');

export const actions: Actions = {
	default: async ({ cookies, url }) => {
		await closeSession(cookies.get(SESSION_COOKIE));
		cookies.delete(SESSION_COOKIE, cookieOptions(url));
		redirect(303, '/login');
	}
};
