// Query-string and form schemas of the Charts and Alarms screens (the JSON API has its own in query.ts).
import { z } from 'zod';
import { AlarmChangeBody } from './query';

export const CHART_VIEW_IDS = ['imr', 'xbar-r', 'xbar-s', 'ewma', 'cusum', 'p'] as const;
export type ChartViewId = (typeof CHART_VIEW_IDS)[number];

export const VIEW_LABELS: Record<ChartViewId, string> = {
	imr: 'I-MR',
	'xbar-r': 'X̄–R',
	'xbar-s': 'X̄–S',
	ewma: 'EWMA',
	cusum: 'CUSUM',
	p: 'p (yield)'
};

/** Anything odd in the URL falls back to "not chosen" instead of a 400: the page stays usable. */
const optionalText = z.string().trim().max(40).optional().catch(undefined);

const rangeBound = z
	.string()
	.trim()
	.regex(/^\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2}))?$/)
	.transform((s) => (s.length === 10 ? `${s}T00:00:00Z` : s))
	.refine((s) => Number.isFinite(Date.parse(s)))
	.transform((s) => new Date(s).toISOString())
	.optional()
	.catch(undefined);

export const ChartsPageQuery = z.object({
	product: optionalText,
	station: optionalText,
	kind: z.enum(['production', 'reference']).optional().catch(undefined),
	chart: z.coerce.number().int().positive().optional().catch(undefined),
	/** e.g. C@1V; kept when product, station or kind change */
	characteristic: z.string().trim().max(60).optional().catch(undefined),
	view: z.enum(CHART_VIEW_IDS).default('imr').catch('imr'),
	/** Stations shown side by side (comma-separated names), with one y scale when shared=1. */
	stations: z
		.string()
		.max(400)
		.transform((s) => [...new Set(s.split(',').map((x) => x.trim()).filter((x) => x.length > 0 && x.length <= 40))].slice(0, 12))
		.optional()
		.catch(undefined),
	shared: z.enum(['1', '0']).optional().catch(undefined),
	/** Time range of the points: a date (YYYY-MM-DD, UTC) or an ISO time; `to` is exclusive. */
	from: rangeBound,
	to: rangeBound
});
export type ChartsSelection = z.infer<typeof ChartsPageQuery>;

export const ALARM_STATUS_FILTERS = ['open', 'acknowledged', 'closed', 'all'] as const;

export const AlarmsPageQuery = z.object({
	// Default: what still needs a person (open and acknowledged, i.e. not closed).
	status: z.enum([...ALARM_STATUS_FILTERS, 'active']).default('active').catch('active'),
	station: optionalText,
	product: optionalText,
	lot: optionalText
});

const AlarmId = z.coerce.number({ error: 'No alarm given' }).int().positive({ error: 'No alarm given' });

export const AcknowledgeAlarmForm = z.object({ alarmId: AlarmId });

const closeFields = AlarmChangeBody.options[1].shape;
export const CloseAlarmForm = z.object({ alarmId: AlarmId, cause: closeFields.cause, action: closeFields.action });

const seqField = (what: string) =>
	z.coerce.number({ error: `Enter the ${what} point number` }).int({ error: 'A whole point number' }).min(0, { error: 'Point numbers start at 0' });

/** The recompute-limits form; first and last point are inclusive here, the API's toSeq is exclusive. */
export const RecomputeLimitsForm = z
	.object({
		fromSeq: seqField('first'),
		lastSeq: seqField('last'),
		exclusions: z
			.array(
				z.object({
					seq: seqField('excluded'),
					reason: z.string().trim().min(3, { error: 'Give a reason for excluding this point' }).max(500)
				})
			)
			.max(200),
		reason: z.string().trim().min(3, { error: 'Say why the limits change' }).max(1000)
	})
	.refine((v) => v.lastSeq - v.fromSeq >= 1, { path: ['lastSeq'], error: 'Choose at least two points' })
	.transform((v) => ({ fromSeq: v.fromSeq, toSeq: v.lastSeq + 1, exclusions: v.exclusions, reason: v.reason }));

/**
 * Form fields → the recompute input. Exclusions come as numbered pairs (`exclusions.3.seq`,
 * `exclusions.3.reason`); rows left blank are dropped, and `rowOf` maps each kept exclusion
 * back to its row so errors land beside the right field.
 */
export function recomputeInput(form: Record<string, string>) {
	const rows: { seq: string; reason: string }[] = [];
	const rowOf: number[] = [];
	for (const key of Object.keys(form)) {
		const m = /^exclusions\.(\d+)\.seq$/.exec(key);
		if (!m) continue;
		const i = Number(m[1]);
		const seq = form[key] ?? '';
		const reason = form[`exclusions.${i}.reason`] ?? '';
		if (!seq.trim() && !reason.trim()) continue;
		rows.push({ seq: seq.trim() === '' ? 'x' : seq, reason });
		rowOf.push(i);
	}
	const parsed = RecomputeLimitsForm.safeParse({ fromSeq: form.fromSeq?.trim() || 'x', lastSeq: form.lastSeq?.trim() || 'x', exclusions: rows, reason: form.reason ?? '' });
	return { parsed, rowOf };
}
