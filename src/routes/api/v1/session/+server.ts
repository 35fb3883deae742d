import { json } from '@sveltejs/kit';
import { closeSession, cookieOptions, SESSION_COOKIE, signIn } from '$lib/server/auth';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { SignInBody } from '$lib/schemas/people';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request, cookies, url, getClientAddress }) => {
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = SignInBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await signIn(parsed.data.email, parsed.data.password, getClientAddress());
	if (!result.ok) {
		if (result.reason === 'rate-limited') {
			return problem(429, 'Too many sign-in attempts; wait before trying again', {
				headers: { 'retry-after': String(result.retryAfterS) }
			});
		}
		return problem(401, 'E-mail or password is not right');
	}
	cookies.set(SESSION_COOKIE, result.token, cookieOptions(url, result.expiresAt));
	const { email, name, role } = result.user;
	return json({ user: { email, name, role } });
};

export const DELETE: RequestHandler = async ({ cookies, url }) => {
	await closeSession(cookies.get(SESSION_COOKIE));
	cookies.delete(SESSION_COOKIE, cookieOptions(url));
	return new Response(null, { status: 204 });
};
