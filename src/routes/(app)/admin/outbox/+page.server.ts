import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { requireArea } from '$lib/server/auth';
import { settings } from '$lib/server/env';
import { listOutbox, OUTBOX_ID, readOutboxMessage } from '$lib/server/mail/outbox';
import type { PageServerLoad } from './$types';

const Query = z.object({ id: z.string().regex(OUTBOX_ID).optional() });

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'admin');
	const query = Query.safeParse({ id: event.url.searchParams.get('id') ?? undefined });
	if (!query.success) error(400, 'Not a message id of the outbox');
	const dir = settings().BIASLINE_OUTBOX_DIR ?? null;
	const messages = dir ? await listOutbox(dir) : [];
	const selected = dir && query.data.id ? await readOutboxMessage(dir, query.data.id) : null;
	if (query.data.id && !selected) error(404, 'No such message in the outbox');
	return { outboxConfigured: dir !== null, messages, selected };
};
