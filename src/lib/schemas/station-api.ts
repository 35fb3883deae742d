// Schemas of the station endpoints (public contract, SI units).
import { z } from 'zod';
import { LotNumber } from './setup';

const finite = (what: string) => z.number({ error: `${what} must be a number` }).finite({ error: `${what} must be finite` });

export const CalibrationBody = z.object({
	references: z
		.array(
			z.object({
				capacitanceF: finite('capacitanceF').positive({ error: 'capacitanceF must be above 0' }).max(1e-6),
				resonanceHz: finite('resonanceHz').positive({ error: 'resonanceHz must be above 0' }).max(1e10)
			})
		)
		.min(2, { error: 'Give two or more reference capacitors' })
		.max(32)
});

export const ResultPoint = z.object({
	biasV: finite('biasV').min(0, { error: 'biasV is a reverse bias, 0 or more' }).max(1000),
	resonanceHz: finite('resonanceHz').positive({ error: 'resonanceHz must be above 0' }).max(1e10),
	bandwidthHz: finite('bandwidthHz').positive({ error: 'bandwidthHz must be above 0' }).max(1e10).optional()
});

export const ResultUnit = z.object({
	// No control characters: PostgreSQL text cannot hold NUL, and none belongs in a serial.
	serial: z
		.string({ error: 'serial is required' })
		.trim()
		.min(1, { error: 'serial is required' })
		.max(80)
		.regex(/^[^\u0000-\u001f\u007f]*$/, { error: 'serial may not contain control characters' }),
	testedAt: z.iso.datetime({ offset: true, error: 'testedAt must be an ISO 8601 time with a zone' }),
	kind: z.enum(['production', 'reference'], { error: 'kind is production or reference' }).default('production'),
	temperatureC: finite('temperatureC').min(-60).max(200).optional(),
	leakageA: finite('leakageA').min(0, { error: 'leakageA must be 0 or more' }).max(1).optional(),
	points: z
		.array(ResultPoint)
		.min(1, { error: 'a unit needs at least one point' })
		.max(64)
		.superRefine((pts, ctx) => {
			const seen = new Map<number, number>();
			pts.forEach((p, i) => {
				const j = seen.get(p.biasV);
				if (j !== undefined) ctx.addIssue({ code: 'custom', path: [i, 'biasV'], message: `repeats points.${j}.biasV` });
				else seen.set(p.biasV, i);
			});
		})
});

export const ResultsBody = z.object({
	lot: LotNumber,
	/** A measurement-system study's id: the units are that study's measurements (kind 'study', never counted in yield or charts). */
	study: z.number({ error: 'study is a study id' }).int({ error: 'study is a study id' }).positive({ error: 'study is a study id' }).max(Number.MAX_SAFE_INTEGER).optional(),
	units: z.array(ResultUnit).min(1, { error: 'send 1 to 500 units' }).max(500, { error: 'send 1 to 500 units' })
});

export type ResultsBodyInput = z.infer<typeof ResultsBody>;

export const IdempotencyKey = z.string().min(1).max(255).regex(/^[\x21-\x7e]+$/, { error: 'printable ASCII without spaces' });
