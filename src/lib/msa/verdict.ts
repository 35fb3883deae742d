/**
 * Acceptance rules shared by the ANOVA and the average-and-range methods. The bands are common
 * practice for gauge R&R (no source cited here): %GRR under 10 % acceptable, 10 % to 30 %
 * conditionally acceptable, over 30 % not acceptable, and at least 5 distinct categories.
 */
import type { BandJudgement, GrrBand, MsaError, MsaVerdict, SpecLimits } from './types';

/** Common practice: upper edge of the "acceptable" band, in %. */
export const ACCEPTABLE_BELOW_PCT = 10;
/** Common practice: upper edge of the "conditional" band, in %. */
export const CONDITIONAL_UP_TO_PCT = 30;
/** Common practice: fewest distinct categories for an adequate measurement system. */
export const MIN_NDC = 5;
/** Default multiplier of sigma for the study variation (6; older forms use 5.15). */
export const DEFAULT_STUDY_VARIATION_MULTIPLIER = 6;

/**
 * Band of a %GRR value. Assumes a finite non-negative percentage. Exactly 10 % and exactly 30 %
 * both fall in the conditional band ("10-30 %" read as a closed interval).
 */
export function grrBand(pctGrr: number): GrrBand {
	if (pctGrr < ACCEPTABLE_BELOW_PCT) return 'acceptable';
	if (pctGrr <= CONDITIONAL_UP_TO_PCT) return 'conditional';
	return 'not-acceptable';
}

/**
 * Number of distinct categories, max(1, floor(1.41 x sigmaPart / sigmaGrr)), truncated as the
 * SixSigma package does. Assumes non-negative finite standard deviations; returns null when
 * sigmaGrr is zero (the ratio is unbounded). A relative 1e-12 nudge keeps a ratio that is
 * mathematically an integer from truncating one lower through rounding error.
 */
export function numberOfDistinctCategories(sigmaPart: number, sigmaGrr: number): number | null {
	if (!(sigmaGrr > 0)) return null;
	const ratio = (1.41 * sigmaPart) / sigmaGrr;
	return Math.max(1, Math.floor(ratio * (1 + 1e-12)));
}

const BAND_RANK: Record<GrrBand, number> = { acceptable: 0, conditional: 1, 'not-acceptable': 2 };

/**
 * Verdict from %GRR of study variation, %GRR of tolerance (null when no limits were given) and
 * ndc. Assumes finite non-negative percentages. The overall result is the worst band; ndc < 5
 * makes it not acceptable; an unknown ndc (GRR estimated as zero, usually too coarse a
 * resolution) makes it indeterminate, because a zero GRR is not evidence of a perfect gauge.
 */
export function judgeStudy(
	pctGrrStudyVariation: number,
	pctGrrTolerance: number | null,
	ndc: number | null
): MsaVerdict {
	const judgements: BandJudgement[] = [
		{ basis: 'study-variation', pctGrr: pctGrrStudyVariation, band: grrBand(pctGrrStudyVariation) }
	];
	if (pctGrrTolerance !== null) {
		judgements.push({ basis: 'tolerance', pctGrr: pctGrrTolerance, band: grrBand(pctGrrTolerance) });
	}
	const reasons: string[] = judgements.map(
		(j) =>
			`%GRR of ${j.basis === 'tolerance' ? 'tolerance' : 'study variation'} is ${j.pctGrr.toFixed(2)} %: ${j.band}.`
	);
	let overall: GrrBand | 'indeterminate' = judgements.reduce<GrrBand>(
		(worst, j) => (BAND_RANK[j.band] > BAND_RANK[worst] ? j.band : worst),
		'acceptable'
	);
	let ndcAdequate: boolean | null = null;
	if (ndc === null) {
		overall = 'indeterminate';
		reasons.push('GRR is estimated as zero, so ndc is undefined: check the gauge resolution.');
	} else {
		ndcAdequate = ndc >= MIN_NDC;
		if (!ndcAdequate) {
			overall = 'not-acceptable';
			reasons.push(`ndc = ${ndc} is below ${MIN_NDC}.`);
		}
	}
	return { judgements, ndcAdequate, overall, reasons };
}

/** Options common to both gauge R&R methods. */
export interface StudyOptions {
	/** Sigma multiplier of the study variation; default 6, 5.15 on older forms. */
	studyVariationMultiplier?: number;
	/** Specification limits; when given, % tolerance is reported and judged. */
	spec?: SpecLimits;
}

export interface ResolvedStudyOptions {
	multiplier: number;
	tolerance: number | null;
}

/** Checks the common options. Assumes nothing; returns an 'invalid-option' error when bad. */
export function resolveStudyOptions(options: StudyOptions): ResolvedStudyOptions | MsaError {
	const multiplier = options.studyVariationMultiplier ?? DEFAULT_STUDY_VARIATION_MULTIPLIER;
	if (!(Number.isFinite(multiplier) && multiplier > 0)) {
		return {
			code: 'invalid-option',
			message: 'studyVariationMultiplier must be a finite number greater than 0.'
		};
	}
	if (options.spec === undefined) return { multiplier, tolerance: null };
	const { lsl, usl } = options.spec;
	if (!(Number.isFinite(lsl) && Number.isFinite(usl) && usl > lsl)) {
		return { code: 'invalid-option', message: 'spec needs finite lsl and usl with usl > lsl.' };
	}
	return { multiplier, tolerance: usl - lsl };
}

/** Narrows the union returned by resolveStudyOptions. Assumes a value that function returned. */
export function isMsaError(x: ResolvedStudyOptions | MsaError): x is MsaError {
	return 'code' in x;
}
