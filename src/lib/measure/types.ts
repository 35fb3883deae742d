/** Shared types of the measurement core. All quantities are SI; names carry their units. */

/** How the part(s) sit in the socket: one part, two identical parts in parallel, or back to back. */
export type Arrangement = 'single' | 'parallel2' | 'antiseries2';

export const ARRANGEMENTS: readonly Arrangement[] = ['single', 'parallel2', 'antiseries2'];

export type MeasureErrorCode =
	| 'invalid-input'
	| 'non-finite'
	| 'non-positive'
	| 'empty'
	| 'length-mismatch'
	| 'duplicate-bias'
	| 'too-few-points'
	| 'degenerate'
	| 'branch-not-below-blocking'
	| 'non-positive-after-stray'
	| 'fit-failed'
	| 'calibration-residual'
	| 'calibration-inductance-change'
	| 'calibration-stray-change'
	| 'calibration-negative-stray'
	| 'invalid-plan';

export type MeasureError = { code: MeasureErrorCode; message: string };

export type Failed = { ok: false; error: MeasureError };

/** Builds a typed refusal. */
export function fail(code: MeasureErrorCode, message: string): Failed {
	return { ok: false, error: { code, message } };
}

/** Fitted junction-capacitance parameters of C(V) = cj0F/(1+V/vjV)^m + cpF. */
export type JunctionParams = { cj0F: number; vjV: number; m: number; cpF: number };

/** Fixture calibration values used by the conversion. */
export type FixtureCalibration = { inductanceH: number; strayF: number };

export type SpecTestCategory = 'capacitance' | 'ratio' | 'q' | 'leakage' | 'fit' | 'measurement';

/** The spec plan (public contract, SI units). A point without limits is measured, not judged. */
export type SpecPlan = {
	points: { biasV: number; minF?: number; maxF?: number }[];
	ratio?: { lowBiasV: number; highBiasV: number; min?: number; max?: number };
	q?: { biasV: number; min: number };
	leakage?: { biasV: number; maxA: number };
	fit?: { maxRmsPct: number };
	matching?: { setSize: number; tolerancePct: number };
	bins?: Partial<Record<SpecTestCategory, number>>;
	/** Control charts: baseline sizes and the rule ids enabled (see $lib/spc); the server uses them. */
	spc?: {
		baselineParts?: number;
		referenceBaselineParts?: number;
		rules?: string[];
		subgroupSize?: number;
		pChartParts?: number;
		/** EWMA weight λ and limit width L (in sigma of the EWMA statistic). */
		ewmaLambda?: number;
		ewmaLimitWidthSigma?: number;
		/** CUSUM reference value k and decision interval h, in sigma. */
		cusumReferenceK?: number;
		cusumDecisionH?: number;
	};
};

/** One failed test; value null when the quantity could not be obtained at all. */
export type SpecFailure = {
	test: string;
	category: SpecTestCategory;
	value: number | null;
	low: number | null;
	high: number | null;
};
