/**
 * Shared types of the statistical-process-control core. Everything here is plain,
 * JSON-safe data so the server can store it and the browser can draw it.
 */

/** Why a computation could not give a number; never NaN, never a throw. */
export type SpcErrorCode =
	| 'EMPTY_SERIES'
	| 'NON_FINITE_VALUE'
	| 'TOO_FEW_POINTS'
	| 'INVALID_SUBGROUP_SIZE'
	| 'INVALID_PARAMETER'
	| 'ZERO_SIGMA'
	| 'INVALID_COUNTS'
	| 'INVALID_SPEC'
	| 'INVALID_SELECTION'
	| 'INVALID_STATE';

export interface SpcError {
	readonly code: SpcErrorCode;
	readonly message: string;
}

export type SpcResult<T> = { readonly ok: true; readonly value: T } | { readonly ok: false; readonly error: SpcError };

/** Three-sigma style limits of one plotted statistic; `sigma` is the sigma of that statistic. */
export interface ShewhartLimits {
	readonly centerLine: number;
	readonly upperControlLimit: number;
	readonly lowerControlLimit: number;
	readonly sigma: number;
}

/** A point an engineer removed from a baseline; the reason is kept for the audit trail. */
export interface Exclusion {
	readonly index: number;
	readonly reason: string;
}

/**
 * Which points of a series make a baseline: the half-open index range
 * [fromIndex, toIndex) minus the excluded indices.
 */
export interface BaselineSelection {
	readonly fromIndex?: number;
	readonly toIndex?: number;
	readonly exclusions?: readonly Exclusion[];
}

/** EWMA chart design: target and sigma of the individual values, weight lambda, width L in sigmas. */
export interface EwmaParameters {
	readonly target: number;
	readonly sigma: number;
	readonly lambda: number;
	readonly limitWidthSigma: number;
}

/** Tabular CUSUM design; reference value k and decision interval h are in multiples of sigma. */
export interface CusumParameters {
	readonly target: number;
	readonly sigma: number;
	readonly referenceK: number;
	readonly decisionH: number;
}

/** Everything the rule engine needs about one chart's frozen limits. */
export interface ChartRuleLimits {
	readonly shewhart: ShewhartLimits;
	readonly ewma?: EwmaParameters;
	readonly cusum?: CusumParameters;
}

export const ZONE_RULE_IDS = ['WE1', 'WE2', 'WE3', 'WE4', 'N1', 'N2', 'N3', 'N4', 'N5', 'N6', 'N7', 'N8'] as const;
export const ALL_RULE_IDS = [...ZONE_RULE_IDS, 'EWMA', 'CUSUM+', 'CUSUM-'] as const;
export type ZoneRuleId = (typeof ZONE_RULE_IDS)[number];
export type RuleId = (typeof ALL_RULE_IDS)[number];

/**
 * Rules on when a plan names none: WE1 (a point beyond 3 sigma) and WE4 (eight in a row on one
 * side, the drift detector) — our choice. Every added rule raises the false-alarm rate of an
 * in-control process, and a product charts several correlated characteristics.
 */
export const DEFAULT_RULE_IDS: readonly RuleId[] = ['WE1', 'WE4'];

export interface Violation {
	readonly ruleId: RuleId;
	/** Index of the point that completes the pattern (the last point of the run). */
	readonly index: number;
	readonly description: string;
}

/**
 * Per-chart state for incremental rule evaluation. Bounded in size: it never holds
 * more than the longest rule window, whatever the length of the history.
 */
export interface RuleState {
	readonly schemaVersion: 1;
	/** Number of points already seen; the next point gets this index. */
	readonly pointCount: number;
	/** The most recent values, oldest first, at most RULE_WINDOW_POINTS of them. */
	readonly recentValues: readonly number[];
	/** EWMA statistic after the last point; null before the first point. */
	readonly ewmaValue: number | null;
	readonly cusumUpper: number;
	readonly cusumLower: number;
}
