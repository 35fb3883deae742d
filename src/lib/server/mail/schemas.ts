// Form schemas of the account page's mail settings (validated on the server only).
import { z } from 'zod';
import { DIGEST_MINUTES } from './types';

const Id = (what: string) => z.coerce.number({ error: `Choose a ${what}` }).int({ error: `Choose a ${what}` }).positive({ error: `Choose a ${what}` });

export const SubscribeBody = z.discriminatedUnion('scope', [
	z.object({ scope: z.literal('line'), line: Id('line') }),
	z.object({ scope: z.literal('product'), product: Id('product') })
], { error: 'Choose a line or a product' });

export const UnsubscribeBody = z.object({ subscriptionId: z.coerce.number().int().positive() });

export const DigestBody = z.object({
	digest: z.coerce.number({ error: 'Choose how often' }).pipe(z.literal(DIGEST_MINUTES, { error: 'Choose one of the offered intervals' }))
});
