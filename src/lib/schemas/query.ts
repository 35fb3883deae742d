// Query-string schemas for the reading endpoints.
import { z } from 'zod';

export const UnitsQuery = z.object({
	limit: z.coerce.number().int().min(1).max(1000).default(100),
	offset: z.coerce.number().int().min(0).max(100_000_000).default(0),
	bin: z.coerce.number().int().min(1).max(99).optional()
});

/** Query string → plain object (the last value wins). */
export function queryObject(params: URLSearchParams): Record<string, string> {
	return Object.fromEntries(params.entries());
}

export const AlarmsQuery = z.object({
	status: z.enum(['open', 'acknowledged', 'closed']).optional(),
	station: z.string().max(40).optional(),
	product: z.string().max(40).optional(),
	lot: z.string().max(40).optional(),
	limit: z.coerce.number().int().min(1).max(1000).default(200)
});

export const AlarmChangeBody = z.discriminatedUnion('status', [
	z.object({ status: z.literal('acknowledged') }),
	z.object({
		status: z.literal('closed'),
		cause: z.string({ error: 'Say what caused it' }).trim().min(3, { error: 'Say what caused it' }).max(2000),
		action: z.string({ error: 'Say what was done' }).trim().min(3, { error: 'Say what was done about it' }).max(2000)
	})
]);
