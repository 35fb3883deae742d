/**
 * Measurement-system-analysis core: crossed gauge R&R by ANOVA and by average and range,
 * station correlation, and plot series. Pure functions over plain rows; every failure is a
 * typed `{ ok: false, error }` value.
 */
export type { CellRef, MsaError, MsaErrorCode, MsaResult, MsaRow, SpecLimits, GrrBand, BandJudgement, MsaVerdict } from './types';
export { buildLayout, type StudyLayout } from './design';
export {
	gaugeRrAnova,
	type AnovaEffectRow,
	type AnovaErrorRow,
	type AnovaTotalRow,
	type AnovaOptions,
	type AnovaVarianceComponents,
	type FullAnovaTable,
	type GaugeRrAnova,
	type MainEffectDenominator,
	type ReducedAnovaTable,
	type VarianceComponent
} from './anova';
export {
	averageRangeStudy,
	type AppraiserSummary,
	type AverageRangeOptions,
	type AverageRangeStudy,
	type RangeAboveLimit,
	type SigmaFigure
} from './average-range';
export {
	stationCorrelation,
	type BiasComparison,
	type CorrelationOptions,
	type IntervalEstimate,
	type PairedTTest,
	type StationCorrelation
} from './correlation';
export {
	anovaComponentBars,
	averageRangeComponentBars,
	rangeChart,
	studyPlots,
	type ComponentBar,
	type InteractionPlot,
	type MeasurementsOfAppraiser,
	type MeasurementsOfPart,
	type RangeChart,
	type StudyPlots,
	type VariationSource
} from './plots';
export { d2Factor, d3Factor, d4Factor, k1Factor, kFromD2Star, MAX_TABLE_N } from './constants';
export {
	ACCEPTABLE_BELOW_PCT,
	CONDITIONAL_UP_TO_PCT,
	DEFAULT_STUDY_VARIATION_MULTIPLIER,
	MIN_NDC,
	grrBand,
	judgeStudy,
	numberOfDistinctCategories,
	type StudyOptions
} from './verdict';
