// Lot page and lot API inputs: the parts table's query (sort, filters, keyset cursor), hold and
// release, matched-set builds and the certificate e-mail. Shared by the page, its actions and the API.
import { z } from 'zod';

/** Parts per page of the lot's parts table. */
export const PARTS_PAGE_SIZE = 50;

export const PART_KINDS = ['production', 'reference', 'bench', 'all'] as const;
export type PartKind = (typeof PART_KINDS)[number];

/** Sort keys: serial, tested time, bin, station, or the capacitance at plan point n (c1, c2, … in plan order). */
export const PartsSort = z.union([z.enum(['serial', 'tested', 'bin', 'station']), z.string().regex(/^c([1-9]|1[0-9]|20)$/, { error: 'sort is serial, tested, bin, station or c1…c20' })], {
	error: 'sort is serial, tested, bin, station or c1…c20'
});
export type PartsSortKey = z.infer<typeof PartsSort>;

/**
 * A keyset cursor: the sort value and the id of the row a page continues after (or before).
 * Sent as base64url of JSON [value, id] so it survives in a URL; the value is a string (serial,
 * ISO time) or a number (bin, station id, capacitance in F) or null (capacitance not measured).
 */
export const Cursor = z
	.string()
	.max(400)
	.regex(/^[A-Za-z0-9_-]+$/, { error: 'not a page cursor' })
	.transform((s, ctx) => {
		try {
			const v: unknown = JSON.parse(fromBase64Url(s));
			const parsed = z.tuple([z.union([z.string().max(200), z.number(), z.null()]), z.number().int().positive()]).safeParse(v);
			if (parsed.success) return { value: parsed.data[0], id: parsed.data[1] };
		} catch {
			// fall through to the issue below
		}
		ctx.addIssue({ code: 'custom', message: 'not a page cursor' });
		return z.NEVER;
	});
export type CursorValue = { value: string | number | null; id: number };

/** Encodes a keyset cursor for the URL (the inverse of Cursor). */
export function encodeCursor(c: CursorValue): string {
	return toBase64Url(JSON.stringify([c.value, c.id]));
}

// base64url (RFC 4648 §5) of UTF-8 text, the same in Node and the browser.
function toBase64Url(text: string): string {
	let bin = '';
	for (const b of new TextEncoder().encode(text)) bin += String.fromCharCode(b);
	return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}
function fromBase64Url(s: string): string {
	const bin = atob(s.replace(/-/g, '+').replace(/_/g, '/'));
	return new TextDecoder('utf-8', { fatal: true }).decode(Uint8Array.from(bin, (c) => c.charCodeAt(0)));
}

/** The direction a column starts in: newest first for the test time, smallest first otherwise. */
export function defaultDir(sort: string): 'asc' | 'desc' {
	return sort === 'tested' ? 'desc' : 'asc';
}

const empty = (v: unknown) => (v === '' ? undefined : v);

export const PartsQuery = z
	.object({
		sort: z.preprocess(empty, PartsSort.default('tested')),
		dir: z.preprocess(empty, z.enum(['asc', 'desc'], { error: 'dir is asc or desc' }).optional()),
		bin: z.preprocess(empty, z.coerce.number({ error: 'bin is a number 1–99' }).int({ error: 'bin is a number 1–99' }).min(1, { error: 'bin is a number 1–99' }).max(99, { error: 'bin is a number 1–99' }).optional()),
		result: z.preprocess(empty, z.enum(['pass', 'fail'], { error: 'result is pass or fail' }).optional()),
		station: z.preprocess(empty, z.string().trim().min(1).max(40, { error: 'At most 40 characters' }).optional()),
		serial: z.preprocess(
			empty,
			z
				.string()
				.trim()
				.max(60, { error: 'At most 60 characters' })
				.regex(/^[\w.:/#-]*$/, { error: 'Letters, digits and . _ - : / # only' })
				.optional()
		),
		kind: z.preprocess(empty, z.enum(PART_KINDS, { error: 'kind is production, reference, bench or all' }).default('production')),
		after: z.preprocess(empty, Cursor.optional()),
		before: z.preprocess(empty, Cursor.optional())
	})
	.refine((q) => !(q.after && q.before), { path: ['before'], error: 'Give after or before, not both' })
	.transform((q) => ({ ...q, dir: q.dir ?? defaultDir(q.sort) }));
export type PartsQueryValue = z.infer<typeof PartsQuery>;

export const DISPOSITIONS = ['held', 'released'] as const;

export const DispositionBody = z.object({
	disposition: z.enum(DISPOSITIONS, { error: 'disposition is held or released' }),
	reason: z.string({ error: 'Give a reason' }).trim().min(5, { error: 'Give a reason of at least 5 characters' }).max(2000, { error: 'At most 2000 characters' })
});

/** Set size and tolerance of a matched-set build (the plan's matching section gives the defaults). */
export const MatchedSetsBody = z.object({
	setSize: z.coerce.number({ error: 'Set size is a whole number 2–16' }).int({ error: 'Set size is a whole number 2–16' }).min(2, { error: 'Set size is a whole number 2–16' }).max(16, { error: 'Set size is a whole number 2–16' }),
	tolerancePct: z.coerce.number({ error: 'Tolerance is a percentage above 0 and at most 50' }).gt(0, { error: 'Tolerance is a percentage above 0 and at most 50' }).max(50, { error: 'Tolerance is a percentage above 0 and at most 50' })
});

export const SetsQuery = z.object({
	limit: z.coerce.number().int().min(1).max(5000).default(500),
	offset: z.coerce.number().int().min(0).max(10_000_000).default(0)
});

export const CertificateMailBody = z.object({
	to: z.string({ error: 'Enter the customer’s e-mail address' }).trim().max(254, { error: 'At most 254 characters' }).pipe(z.email({ error: 'Enter a valid e-mail address' })),
	contact: z.preprocess(empty, z.string().trim().max(120, { error: 'At most 120 characters' }).optional()),
	note: z.preprocess(empty, z.string().trim().max(2000, { error: 'At most 2000 characters' }).optional())
});

/** The lot page's own view options (not the parts table): C–V axes and the characteristic shown in detail. */
export const LotViewQuery = z.object({
	cv: z.preprocess(empty, z.enum(['linear', 'log']).catch('linear').default('linear')),
	cap: z.preprocess(empty, z.string().max(20).optional())
});

/**
 * The parts query as the OpenAPI document shows it (strings as they arrive in the URL). Kept
 * beside PartsQuery, which validates; lots.test.ts checks both accept and refuse the same examples.
 */
export const PartsQueryDoc = z.object({
	sort: z.string().optional().meta({ description: 'serial, tested (default), bin, station, or c1…c20' }),
	dir: z.enum(['asc', 'desc']).optional().meta({ description: 'default: desc for tested, asc otherwise' }),
	bin: z.string().optional().meta({ description: 'bin number 1–99' }),
	result: z.enum(['pass', 'fail']).optional(),
	station: z.string().optional().meta({ description: 'station name' }),
	serial: z.string().optional().meta({ description: 'serial prefix' }),
	kind: z.enum(PART_KINDS).optional().meta({ description: 'default production' }),
	after: z.string().optional().meta({ description: 'cursor: the page after this row (a response’s next)' }),
	before: z.string().optional().meta({ description: 'cursor: the page before this row (a response’s prev)' })
});
