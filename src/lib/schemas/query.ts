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

export const ChartsQuery = z.object({
	station: z.string().max(40).optional(),
	product: z.string().max(40).optional(),
	kind: z.enum(['production', 'reference']).optional()
});

export const ChartQuery = z.object({
	view: z.enum(['imr', 'xbar-r', 'xbar-s', 'ewma', 'cusum', 'p']).default('imr'),
	limit: z.coerce.number().int().min(2).max(100_000).default(500),
	fromSeq: z.coerce.number().int().min(0).optional(),
	/** Time range of the points (ISO 8601): from inclusive, to exclusive. */
	from: z.iso.datetime({ offset: true }).optional(),
	to: z.iso.datetime({ offset: true }).optional(),
	/**
	 * `rows` (default): a record per point. `columns`: the points as a record of lists (seq,
	 * value, at in epoch ms, unitId, limitsVersion; rules only for the points that broke one, by
	 * seq; no serials) and every list of records in the view data as a record of lists.
	 */
	shape: z
		.enum(['rows', 'columns'])
		.default('rows')
		.meta({
			description:
				'rows (default): a record per point. columns: points as { seq, value, at (epoch ms), unitId, limitsVersion, rules (only the points that broke a rule, by seq) }, no serials; every list of records in data as a record of lists'
		})
});

export const RecomputeLimitsBody = z
	.object({
		fromSeq: z.number().int().min(0),
		toSeq: z.number().int().min(1),
		exclusions: z
			.array(z.object({ seq: z.number().int().min(0), reason: z.string().trim().min(3, { error: 'Give a reason for each excluded point' }).max(500) }))
			.max(1000)
			.default([]),
		reason: z.string({ error: 'Say why the limits change' }).trim().min(3, { error: 'Say why the limits change' }).max(1000)
	})
	.refine((v) => v.toSeq - v.fromSeq >= 2, { path: ['toSeq'], error: 'Choose at least two points' });
