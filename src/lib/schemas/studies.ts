// Input schemas of measurement-system studies (API bodies and the new-study form) and of the
// audit trail's filters.
import { z } from 'zod';
import { LotNumber } from './setup';

export const STUDY_MULTIPLIERS = [6, 5.15] as const;

const Serial = z.string({ error: 'serial is required' }).trim().min(1, { error: 'serial is required' }).max(80, { error: 'at most 80 characters' });

export const StudyPart = z.object({ serial: Serial, lot: LotNumber });

export const StudyBody = z
	.object({
		productCode: z.string({ error: 'Choose a product' }).trim().min(1, { error: 'Choose a product' }).max(40),
		name: z.string({ error: 'Give the study a name' }).trim().min(1, { error: 'Give the study a name' }).max(120, { error: 'At most 120 characters' }),
		parts: z.array(StudyPart).min(2, { error: 'Give 2 to 25 parts' }).max(25, { error: 'Give 2 to 25 parts' }),
		stations: z
			.array(z.string().trim().min(1).max(40))
			.min(2, { error: 'Choose 2 to 10 stations' })
			.max(10, { error: 'Choose 2 to 10 stations' }),
		trials: z.number({ error: 'Trials must be a whole number' }).int({ error: 'Trials must be a whole number' }).min(2, { error: '2 to 5 trials' }).max(5, { error: '2 to 5 trials' }),
		multiplier: z
			.union([z.literal(6), z.literal(5.15)], { error: 'The multiplier is 6 or 5.15' })
			.default(6)
	})
	.superRefine((b, ctx) => {
		const seen = new Set<string>();
		b.parts.forEach((p, i) => {
			if (seen.has(p.serial)) ctx.addIssue({ code: 'custom', path: ['parts', i, 'serial'], message: `${p.serial} is listed twice` });
			seen.add(p.serial);
		});
		const stations = new Set<string>();
		b.stations.forEach((s, i) => {
			if (stations.has(s)) ctx.addIssue({ code: 'custom', path: ['stations', i], message: `${s} is listed twice` });
			stations.add(s);
		});
	});
export type StudyBodyInput = z.infer<typeof StudyBody>;

export const StudyPatchBody = z.object({
	status: z.enum(['running', 'finished'], { error: "status is 'running' (start) or 'finished' (finish)" })
});

export const StudyId = z.coerce.number({ error: 'Study ids are whole numbers' }).int().positive().max(Number.MAX_SAFE_INTEGER);

/** The new-study form: serials one per line (or separated by commas or spaces), all from one lot. */
export const StudyForm = z.object({
	productCode: z.string().trim().min(1, { error: 'Choose a product' }),
	name: z.string().trim().min(1, { error: 'Give the study a name' }).max(120),
	lot: LotNumber,
	serials: z.string().max(5000).transform((s) => s.split(/[\s,;]+/).filter((x) => x.length > 0)),
	stations: z.array(z.string()),
	trials: z.coerce.number({ error: 'Trials must be a whole number' }).int({ error: 'Trials must be a whole number' }),
	multiplier: z.coerce.number()
});

const localOrIso = z
	.string()
	.trim()
	.refine((s) => s === '' || !Number.isNaN(Date.parse(s)), { error: 'a date and time' })
	.optional();

/** Filters of the audit trail (page, JSON and CSV share them; they live in the URL). */
export const AuditQuery = z.object({
	entity: z.string().trim().max(40).optional(),
	actor: z.string().trim().max(120).optional(),
	from: localOrIso,
	to: localOrIso,
	limit: z.coerce.number().int().min(1).max(500).default(50),
	offset: z.coerce.number().int().min(0).max(10_000_000).default(0)
});
export type AuditQueryInput = z.infer<typeof AuditQuery>;
