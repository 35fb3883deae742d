import { fail, redirect } from '@sveltejs/kit';
import { cookieOptions, SESSION_COOKIE, signIn } from '$lib/server/auth';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { SignInBody } from '$lib/schemas/people';
import type { Actions, PageServerLoad } from './$types';

/** Only same-site paths are followed after sign-in (no open redirect). */
function safeNext(next: string | null): string {
	return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/\\') ? next : '/floor';
}

export const load: PageServerLoad = ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	return {};
};

export const actions: Actions = {
	default: async ({ request, cookies, url, getClientAddress, setHeaders }) => {
		const values = formObject(await request.formData());
		const parsed = SignInBody.safeParse(values);
		if (!parsed.success) return fail(400, { errors: fieldErrors(parsed.error), values: { email: values.email ?? '' } });
		const result = await signIn(parsed.data.email, parsed.data.password, getClientAddress());
		if (!result.ok) {
			if (result.reason === 'rate-limited') {
				setHeaders({ 'retry-after': String(result.retryAfterS) });
				const minutes = Math.ceil(result.retryAfterS / 60);
				return fail(429, {
					errors: { _: `Too many attempts. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.` },
					values: { email: parsed.data.email }
				});
			}
			return fail(401, { errors: { _: 'E-mail or password is not right.' }, values: { email: parsed.data.email } });
		}
		cookies.set(SESSION_COOKIE, result.token, cookieOptions(url, result.expiresAt));
		redirect(303, safeNext(url.searchParams.get('next')));
	}
};
