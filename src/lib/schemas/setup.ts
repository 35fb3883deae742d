// Input schemas for setting up: products and spec plans, stations and fixtures, lots.
// Shared by the forms and the JSON API; the plan's meaning is checked by the domain validator.
import { z } from 'zod';
import { validateSpecPlan } from '$lib/measure';
import { ARRANGEMENTS } from '$lib/measure/types';
import { ALL_RULE_IDS } from '$lib/spc/types';

const positive = (what: string) => z.number({ error: `${what} must be a number` }).finite().positive({ error: `${what} must be above 0` });
const nonNegative = (what: string) => z.number({ error: `${what} must be a number` }).finite().min(0, { error: `${what} must be 0 or more` });

const PlanPoint = z.object({
	biasV: nonNegative('Bias'),
	minF: positive('Minimum capacitance').optional(),
	maxF: positive('Maximum capacitance').optional()
});

export const SpecPlanSchema = z
	.object({
		points: z.array(PlanPoint).min(1, { error: 'Give at least one bias point' }).max(32, { error: 'At most 32 bias points' }),
		ratio: z
			.object({ lowBiasV: nonNegative('Low bias'), highBiasV: nonNegative('High bias'), min: positive('Minimum ratio').optional(), max: positive('Maximum ratio').optional() })
			.optional(),
		q: z.object({ biasV: nonNegative('Q bias'), min: positive('Minimum Q') }).optional(),
		leakage: z.object({ biasV: nonNegative('Leakage bias'), maxA: positive('Maximum leakage') }).optional(),
		fit: z.object({ maxRmsPct: positive('Fit limit') }).optional(),
		matching: z.object({ setSize: z.number().int().min(2).max(16), tolerancePct: positive('Tolerance').max(50) }).optional(),
		bins: z.record(z.enum(['capacitance', 'ratio', 'q', 'leakage', 'fit', 'measurement']), z.number().int().min(2).max(99)).optional(),
		spc: z
			.object({
				baselineParts: z.number().int().min(2).max(10_000).optional(),
				referenceBaselineParts: z.number().int().min(2).max(1000).optional(),
				rules: z.array(z.enum(ALL_RULE_IDS)).max(ALL_RULE_IDS.length).optional(),
				subgroupSize: z.number().int().min(2).max(25).optional(),
				pChartParts: z.number().int().min(10).max(10_000).optional(),
				ewmaLambda: z.number({ error: 'EWMA weight must be a number' }).gt(0, { error: 'EWMA weight must be above 0' }).max(1, { error: 'EWMA weight is at most 1' }).optional(),
				ewmaLimitWidthSigma: z.number().min(1, { error: 'EWMA limit width is at least 1 sigma' }).max(6, { error: 'EWMA limit width is at most 6 sigma' }).optional(),
				cusumReferenceK: z.number().gt(0, { error: 'CUSUM k must be above 0' }).max(3, { error: 'CUSUM k is at most 3 sigma' }).optional(),
				cusumDecisionH: z.number().min(1, { error: 'CUSUM h is at least 1 sigma' }).max(20, { error: 'CUSUM h is at most 20 sigma' }).optional()
			})
			.optional()
	})
	.superRefine((plan, ctx) => {
		const checked = validateSpecPlan(plan);
		if (!checked.ok) {
			for (const e of checked.errors) ctx.addIssue({ code: 'custom', path: e.path.split('.').map((p) => (/^\d+$/.test(p) ? Number(p) : p)), message: e.message });
		}
	});

export type SpecPlanInput = z.infer<typeof SpecPlanSchema>;

export const ProductCode = z
	.string({ error: 'Enter a product code' })
	.trim()
	.regex(/^[A-Za-z0-9][A-Za-z0-9._-]{0,39}$/, { error: 'Letters, digits, dot, dash or underscore; up to 40 characters' });

export const ProductBody = z.object({
	code: ProductCode,
	name: z.string({ error: 'Enter a name' }).trim().min(1, { error: 'Enter a name' }).max(200),
	family: z.string().trim().max(60).optional(),
	plan: SpecPlanSchema
});

export const PlanChangeBody = z.object({ plan: SpecPlanSchema, note: z.string().trim().max(500).optional() });

export const Fixture = z.object({
	inductanceH: positive('Inductance').max(1, { error: 'Inductance above 1 H is not a test fixture' }),
	strayF: nonNegative('Stray capacitance').max(1e-9, { error: 'Stray above 1 nF is not plausible' }),
	blockingF: positive('Blocking capacitor').max(1e-3).nullable(),
	arrangement: z.enum(ARRANGEMENTS, { error: 'Choose single, parallel2 or antiseries2' })
});

export const CalibrationPolicy = z.object({
	validityHours: positive('Validity').max(24 * 31).optional(),
	maxResidualPpm: positive('Residual limit').optional(),
	maxInductanceChangePct: positive('Inductance change limit').optional(),
	maxStrayChangeF: positive('Stray change limit').optional()
});

export const StationName = z
	.string({ error: 'Enter a station name' })
	.trim()
	.regex(/^[A-Za-z0-9][A-Za-z0-9 ._-]{0,39}$/, { error: 'Letters, digits, space, dot, dash or underscore; up to 40 characters' });

export const StationBody = z.object({
	name: StationName,
	line: z.string().trim().min(1).max(80).optional(),
	fixture: Fixture,
	calibration: CalibrationPolicy.optional()
});

export const LotNumber = z
	.string({ error: 'Enter a lot number' })
	.trim()
	.regex(/^[A-Za-z0-9][A-Za-z0-9._/-]{0,39}$/, { error: 'Letters, digits, dot, dash, slash or underscore; up to 40 characters' });

export const LotBody = z.object({
	number: LotNumber,
	productCode: ProductCode,
	quantity: z.number({ error: 'Quantity must be a whole number' }).int({ error: 'Quantity must be a whole number' }).positive().max(100_000_000)
});

export const LotStatusBody = z.object({ status: z.enum(['open', 'closed'], { error: 'status is open or closed' }) });
