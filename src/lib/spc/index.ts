/** Public surface of the statistical-process-control core (pure domain code). */
export * from './types';
export { controlChartConstants, MIN_SUBGROUP_SIZE, MAX_SUBGROUP_SIZE } from './constants';
export type { ControlChartConstants } from './constants';
export {
	DEFAULT_BASELINE_PARTS,
	DEFAULT_CUSUM_DECISION_H,
	DEFAULT_CUSUM_REFERENCE_K,
	DEFAULT_EWMA_LAMBDA,
	DEFAULT_EWMA_LIMIT_WIDTH_SIGMA,
	computeBaseline,
	cusumParameters,
	cusumSeries,
	cusumUpdate,
	ewmaLimitsAt,
	ewmaParameters,
	ewmaSeries,
	ewmaUpdate,
	formSubgroups,
	groupByInterval,
	groupByParts,
	individualsLimits,
	movingRanges,
	pChart,
	pChartLimitsFor,
	xbarRLimits,
	xbarRLimitsFromSummary,
	xbarSLimits,
	xbarSLimitsFromSummary
} from './charts';
export type {
	Baseline,
	BaselineOptions,
	CusumPoint,
	EwmaPoint,
	IndividualsChart,
	PassFailCounts,
	PChart,
	PChartPoint,
	PChartStatistic,
	SubgroupChart,
	SubgroupStatistics,
	TimedPassFailCounts
} from './charts';
export { RULE_WINDOW_POINTS, evaluateRules, initialRuleState, step } from './rules';
export {
	MIN_POINTS_FOR_ANDERSON_DARLING,
	MIN_POINTS_FOR_CAPABILITY,
	MIN_POINTS_FOR_TIGHT_INTERVALS,
	NORMALITY_ALPHA,
	andersonDarlingNormality,
	andersonDarlingPValue,
	capability
} from './capability';
export type {
	AndersonDarlingResult,
	CapabilityOptions,
	CapabilityReport,
	CapabilityWarning,
	CapabilityWarningCode,
	IndexEstimate,
	SpecLimits,
	WithinSigmaMethod
} from './capability';
