/**
 * Shared shapes of the measurement-system-analysis (MSA) core. Stations take the place of the
 * "appraisers" (operators) of a classic gauge study, so the row field keeps the classic name.
 */

/** One measurement of a study: a part measured by an appraiser (station) in one trial. */
export interface MsaRow {
	part: string;
	appraiser: string;
	trial: number;
	value: number;
}

/** Machine-readable reason an analysis refused its input or could not produce a number. */
export type MsaErrorCode =
	| 'empty'
	| 'invalid-row'
	| 'non-finite-value'
	| 'duplicate-cell'
	| 'unbalanced'
	| 'too-few-parts'
	| 'too-few-appraisers'
	| 'too-few-trials'
	| 'too-many-levels'
	| 'invalid-option'
	| 'no-variation';

/** A (part, appraiser, trial) coordinate of the study grid. */
export interface CellRef {
	part: string;
	appraiser: string;
	trial: number;
}

export interface MsaError {
	code: MsaErrorCode;
	message: string;
	/** For 'unbalanced': the grid cells with no measurement; for 'duplicate-cell': the repeated ones. */
	cells?: CellRef[];
	/** For 'invalid-row' / 'non-finite-value': indices of the offending input rows. */
	rowIndices?: number[];
}

export type MsaResult<T> = { ok: true; value: T } | { ok: false; error: MsaError };

/** Specification limits of the characteristic; the tolerance is usl - lsl. */
export interface SpecLimits {
	lsl: number;
	usl: number;
}

/** Acceptance band of a %GRR figure (common practice: < 10 %, 10-30 %, > 30 %). */
export type GrrBand = 'acceptable' | 'conditional' | 'not-acceptable';

export interface BandJudgement {
	basis: 'study-variation' | 'tolerance';
	pctGrr: number;
	band: GrrBand;
}

export interface MsaVerdict {
	/** Judgement of %GRR of study variation, and of tolerance when limits were given. */
	judgements: BandJudgement[];
	/** ndc >= 5 (common practice); null when ndc could not be computed (GRR estimated as zero). */
	ndcAdequate: boolean | null;
	/** Worst of the judgements; 'not-acceptable' when ndc < 5; 'indeterminate' when ndc is null. */
	overall: GrrBand | 'indeterminate';
	/** Plain-language reasons, one per rule that fired. */
	reasons: string[];
}
