import { fail } from '@sveltejs/kit';
import { readSessionToken, requireArea, SESSION_COOKIE, sha256 } from '$lib/server/auth';
import { DigestBody, SubscribeBody, UnsubscribeBody } from '$lib/server/mail/schemas';
import { DIGEST_MINUTES } from '$lib/server/mail/types';
import { getDigestMinutes, listSubscriptions, listTargets, setDigestMinutes, subscribe, unsubscribe } from '$lib/server/mail/subscriptions';
import { changePassword } from '$lib/server/users';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { ChangePasswordBody } from '$lib/schemas/people';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'account');
	const [subscriptions, targets, digestMinutes] = await Promise.all([listSubscriptions(user.id), listTargets(), getDigestMinutes(user.id)]);
	return { subscriptions, targets, digestMinutes, digestChoices: DIGEST_MINUTES };
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
	},
	subscribe: async (event) => {
		const user = requireArea(event, 'account');
		const values = formObject(await event.request.formData());
		const parsed = SubscribeBody.safeParse(values);
		if (!parsed.success) {
			const errors = fieldErrors(parsed.error);
			const field = values.scope === 'product' ? 'product' : 'line';
			return fail(400, { action: 'subscribe', errors: { [field]: errors[field] ?? errors.scope ?? errors._ ?? 'Choose a line or a product' } });
		}
		const b = parsed.data;
		const result = b.scope === 'line' ? await subscribe(user.id, 'line', b.line) : await subscribe(user.id, 'product', b.product);
		if (!result.ok) return fail(400, { action: 'subscribe', errors: { [result.field]: result.message } });
		return { action: 'subscribe', done: result.created ? 'Subscribed: new alarms there will reach you by e-mail.' : 'You already follow it.' };
	},
	unsubscribe: async (event) => {
		const user = requireArea(event, 'account');
		const parsed = UnsubscribeBody.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'unsubscribe', errors: { row: 'Choose a subscription to remove' } });
		if (!(await unsubscribe(user.id, parsed.data.subscriptionId))) return fail(404, { action: 'unsubscribe', errors: { row: 'No such subscription' } });
		return { action: 'unsubscribe', done: 'Subscription removed.' };
	},
	digest: async (event) => {
		const user = requireArea(event, 'account');
		const parsed = DigestBody.safeParse(formObject(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'digest', errors: fieldErrors(parsed.error) });
		await setDigestMinutes(user.id, parsed.data.digest);
		return { action: 'digest', done: parsed.data.digest === 0 ? 'You get one e-mail per alarm.' : `You get at most one e-mail every ${parsed.data.digest} minutes.` };
	}
};
