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
