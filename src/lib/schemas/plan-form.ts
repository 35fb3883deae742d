// The set-up forms as people fill them in: every field is the text typed, in screen units
// (pF, V, nA, µH). The server turns these into the API's SI shapes (src/lib/server/plan-form.ts)
// and validates them with the same schemas as the API (./setup.ts).
import { z } from 'zod';
import { LotNumber, ProductCode, StationName } from './setup';

export const BIN_CATEGORIES = ['capacitance', 'ratio', 'q', 'leakage', 'fit', 'measurement'] as const;
export type BinCategory = (typeof BIN_CATEGORIES)[number];

export const BIN_LABELS: Record<BinCategory, string> = {
	capacitance: 'Capacitance',
	ratio: 'Ratio',
	q: 'Q',
	leakage: 'Leakage',
	fit: 'Fit quality',
	measurement: 'Measurement'
};

/** One row of the bias-point table, as typed (bias in V, limits in pF). */
export type PointValues = { biasV: string; minPF: string; maxPF: string };

/** The plan editor's fields as typed; names match the form's input names (`ratio.min`, …). */
export type PlanFormValues = {
	points: PointValues[];
	ratio: { lowBiasV: string; highBiasV: string; min: string; max: string };
	q: { biasV: string; min: string };
	leakage: { biasV: string; maxNA: string };
	fit: { maxRmsPct: string };
	matching: { setSize: string; tolerancePct: string };
	bins: Record<BinCategory, string>;
	spc: {
		baselineParts: string;
		referenceBaselineParts: string;
		subgroupSize: string;
		pChartParts: string;
		ewmaLambda: string;
		ewmaLimitWidthSigma: string;
		cusumReferenceK: string;
		cusumDecisionH: string;
		/** The rule ids ticked (form inputs `spc.rule.WE1` …). */
		rules: string[];
	};
	note: string;
};

/** The values used when a control-chart field is left empty (shown as placeholders). */
export type SpcDefaults = Record<Exclude<keyof PlanFormValues['spc'], 'rules'>, number>;

/** Form errors keyed by input name (`points.2.minPF`), `_` for the form as a whole. */
export type FormErrors = Record<string, string>;

/** A required text field: an empty one says what to enter, a filled one gets the full check. */
const filled = <T extends z.ZodType<string, string>>(message: string, schema: T) =>
	z.string({ error: message }).trim().min(1, { error: message }).pipe(schema);

export const PRODUCT_FAMILIES = ['abrupt', 'hyperabrupt', 'other'] as const;

export const ProductHeadForm = z.object({
	code: filled('Enter a product code', ProductCode),
	name: z.string({ error: 'Enter a name' }).trim().min(1, { error: 'Enter a name' }).max(200, { error: 'At most 200 characters' }),
	family: z.enum(PRODUCT_FAMILIES, { error: 'Choose abrupt, hyperabrupt or other' })
});

export const PlanNoteForm = z.object({ note: z.string().trim().max(500, { error: 'At most 500 characters' }) });

/** The station form as typed: fixture in µH / pF / nF, policy in h / ppm / % / pF. */
export type StationFormValues = {
	name: string;
	line: string;
	inductanceUH: string;
	strayPF: string;
	blockingNF: string;
	arrangement: string;
	validityHours: string;
	maxResidualPpm: string;
	maxInductanceChangePct: string;
	maxStrayChangePF: string;
};

export const LotOpenForm = z.object({
	number: filled('Enter a lot number', LotNumber),
	productCode: filled('Choose a product', ProductCode),
	quantity: z.coerce
		.number({ error: 'Quantity must be a whole number' })
		.int({ error: 'Quantity must be a whole number' })
		.positive({ error: 'Quantity must be at least 1' })
		.max(100_000_000, { error: 'At most 100,000,000' })
});

export const LotNumberForm = z.object({ number: LotNumber });

export const LoadLotForm = z.object({ lot: z.union([z.literal(''), LotNumber]) });

export const StationNameParam = StationName;
export const ProductCodeParam = ProductCode;
export const LotNumberParam = LotNumber;
