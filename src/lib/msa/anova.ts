/**
 * Crossed gauge R&R by two-way random-effects ANOVA with part x appraiser interaction,
 * y_ijk = mu + P_i + O_j + (PO)_ij + e_ijk, on a balanced design (p parts, o appraisers, r trials).
 *
 * Conventions (the published examples use the same; see tests/reference/msa/gauge-rr-examples.json):
 * - F for part and appraiser in the full table is taken against MS_interaction by default
 *   (Montgomery; the AIAG manual's appendix; SixSigma's default errorTerm), because under the
 *   random-effects model E[MS_part] and E[MS_appraiser] contain the interaction term. The option
 *   mainEffectDenominator = 'repeatability' reproduces the AIAG manual's own page-127 example.
 * - Pooling: the interaction is kept when its p-value <= alpha (default 0.05); when p > alpha its
 *   sum of squares and degrees of freedom are added to repeatability and the reduced additive
 *   table (F against the pooled mean square) gives the variance components.
 * - Variance components by expected mean squares; a negative estimate is set to 0 and flagged,
 *   because a variance cannot be negative and the negative value only reflects sampling noise.
 */
import { fUpperTailAccurate } from '../stats/distributions';
import { buildLayout, requireLevels } from './design';
import type { MsaResult, MsaRow, MsaVerdict } from './types';
import {
	isMsaError,
	judgeStudy,
	numberOfDistinctCategories,
	resolveStudyOptions,
	type StudyOptions
} from './verdict';

export interface AnovaEffectRow {
	df: number;
	ss: number;
	ms: number;
	/** null when the denominator mean square is zero. */
	f: number | null;
	/** Upper-tail p of f; 0 when f is unbounded (positive numerator over zero), null when 0/0. */
	p: number | null;
}

export interface AnovaErrorRow {
	df: number;
	ss: number;
	ms: number;
}

export interface AnovaTotalRow {
	df: number;
	ss: number;
}

export type MainEffectDenominator = 'interaction' | 'repeatability';

export interface FullAnovaTable {
	part: AnovaEffectRow;
	appraiser: AnovaEffectRow;
	partXAppraiser: AnovaEffectRow;
	repeatability: AnovaErrorRow;
	total: AnovaTotalRow;
	mainEffectDenominator: MainEffectDenominator;
}

export interface ReducedAnovaTable {
	part: AnovaEffectRow;
	appraiser: AnovaEffectRow;
	/** Interaction pooled into repeatability. */
	repeatability: AnovaErrorRow;
	total: AnovaTotalRow;
}

export interface VarianceComponent {
	variance: number;
	stdDev: number;
	/** multiplier x stdDev. */
	studyVariation: number;
	pctContribution: number;
	pctStudyVariation: number;
	/** 100 x studyVariation / (usl - lsl); null without spec limits. */
	pctTolerance: number | null;
	/** True when the moment estimate was negative and was set to 0. */
	truncatedAtZero: boolean;
}

export interface AnovaVarianceComponents {
	totalGrr: VarianceComponent;
	repeatability: VarianceComponent;
	reproducibility: VarianceComponent;
	appraiser: VarianceComponent;
	/** null when the interaction was pooled into repeatability. */
	partXAppraiser: VarianceComponent | null;
	partToPart: VarianceComponent;
	total: VarianceComponent;
}

export interface AnovaOptions extends StudyOptions {
	/** Significance level for keeping the interaction, in (0, 1]; default 0.05. 1 never pools. */
	alpha?: number;
	/** Denominator of F for part and appraiser in the full table; default 'interaction'. */
	mainEffectDenominator?: MainEffectDenominator;
}

export interface GaugeRrAnova {
	design: { parts: string[]; appraisers: string[]; trials: number[] };
	settings: {
		alpha: number;
		studyVariationMultiplier: number;
		tolerance: number | null;
		mainEffectDenominator: MainEffectDenominator;
	};
	full: FullAnovaTable;
	/** True when the interaction p-value exceeded alpha and was pooled. */
	interactionPooled: boolean;
	/** The reduced additive table, present when the interaction was pooled. */
	reduced: ReducedAnovaTable | null;
	components: AnovaVarianceComponents;
	/** max(1, floor(1.41 sigma_part / sigma_GRR)); null when sigma_GRR is 0. */
	ndc: number | null;
	verdict: MsaVerdict;
}

function effectRow(df: number, ss: number, denominatorMs: number, denominatorDf: number): AnovaEffectRow {
	const ms = ss / df;
	if (!(denominatorMs > 0)) {
		return { df, ss, ms, f: null, p: ms > 0 ? 0 : null };
	}
	const f = ms / denominatorMs;
	const p = fUpperTailAccurate(f, df, denominatorDf);
	return { df, ss, ms, f, p: Number.isFinite(p) ? p : null };
}

/**
 * Two-way crossed gauge R&R ANOVA. Assumes rows of one characteristic from a balanced crossed
 * study with at least 2 parts, 2 appraisers (stations) and 2 trials; anything else, bad options
 * or data with no variation at all come back as a typed error.
 */
export function gaugeRrAnova(rows: readonly MsaRow[], options: AnovaOptions = {}): MsaResult<GaugeRrAnova> {
	const alpha = options.alpha ?? 0.05;
	if (!(Number.isFinite(alpha) && alpha > 0 && alpha <= 1)) {
		return { ok: false, error: { code: 'invalid-option', message: 'alpha must be in (0, 1].' } };
	}
	const mainEffectDenominator = options.mainEffectDenominator ?? 'interaction';
	if (mainEffectDenominator !== 'interaction' && mainEffectDenominator !== 'repeatability') {
		return {
			ok: false,
			error: { code: 'invalid-option', message: "mainEffectDenominator must be 'interaction' or 'repeatability'." }
		};
	}
	const common = resolveStudyOptions(options);
	if (isMsaError(common)) return { ok: false, error: common };

	const built = buildLayout(rows);
	if (!built.ok) return built;
	const layout = built.value;
	const levelError = requireLevels(layout, { parts: 2, appraisers: 2, trials: 2 }, 'The ANOVA method');
	if (levelError) return { ok: false, error: levelError };

	const p = layout.parts.length;
	const o = layout.appraisers.length;
	const r = layout.trials.length;
	const { values } = layout;

	const cellMean = values.map((byAppraiser) =>
		byAppraiser.map((trials) => trials.reduce((s, v) => s + v, 0) / r)
	);
	let grandSum = 0;
	for (const row of cellMean) for (const m of row) grandSum += m;
	const grand = grandSum / (p * o);
	const partMean = cellMean.map((row) => row.reduce((s, m) => s + m, 0) / o);
	const appraiserMean = layout.appraisers.map(
		(_, j) => cellMean.reduce((s, row) => s + (row[j] ?? 0), 0) / p
	);

	// Sums of squares from deviations (not from raw sums of squares) to avoid cancellation.
	let ssPart = 0;
	for (const m of partMean) ssPart += (m - grand) ** 2;
	ssPart *= o * r;
	let ssAppraiser = 0;
	for (const m of appraiserMean) ssAppraiser += (m - grand) ** 2;
	ssAppraiser *= p * r;
	let ssInteraction = 0;
	let ssError = 0;
	let ssTotal = 0;
	for (let i = 0; i < p; i++) {
		for (let j = 0; j < o; j++) {
			const cm = cellMean[i]?.[j] ?? 0;
			ssInteraction += (cm - (partMean[i] ?? 0) - (appraiserMean[j] ?? 0) + grand) ** 2;
			for (const v of values[i]?.[j] ?? []) {
				ssError += (v - cm) ** 2;
				ssTotal += (v - grand) ** 2;
			}
		}
	}
	ssInteraction *= r;

	const dfPart = p - 1;
	const dfAppraiser = o - 1;
	const dfInteraction = (p - 1) * (o - 1);
	const dfError = p * o * (r - 1);
	const dfTotal = p * o * r - 1;
	const msError = ssError / dfError;
	const msInteraction = ssInteraction / dfInteraction;

	const partXAppraiser = effectRow(dfInteraction, ssInteraction, msError, dfError);
	const mainMs = mainEffectDenominator === 'interaction' ? msInteraction : msError;
	const mainDf = mainEffectDenominator === 'interaction' ? dfInteraction : dfError;
	const full: FullAnovaTable = {
		part: effectRow(dfPart, ssPart, mainMs, mainDf),
		appraiser: effectRow(dfAppraiser, ssAppraiser, mainMs, mainDf),
		partXAppraiser,
		repeatability: { df: dfError, ss: ssError, ms: msError },
		total: { df: dfTotal, ss: ssTotal },
		mainEffectDenominator
	};

	// A null p (0/0: no interaction and no repeatability scatter) keeps the full model.
	const interactionPooled = partXAppraiser.p !== null && partXAppraiser.p > alpha;
	let reduced: ReducedAnovaTable | null = null;
	let varRepeat: number;
	let rawAppraiser: number;
	let rawPart: number;
	let rawInteraction: number | null;
	if (interactionPooled) {
		const dfPooled = dfInteraction + dfError;
		const ssPooled = ssInteraction + ssError;
		const msPooled = ssPooled / dfPooled;
		reduced = {
			part: effectRow(dfPart, ssPart, msPooled, dfPooled),
			appraiser: effectRow(dfAppraiser, ssAppraiser, msPooled, dfPooled),
			repeatability: { df: dfPooled, ss: ssPooled, ms: msPooled },
			total: { df: dfTotal, ss: ssTotal }
		};
		varRepeat = msPooled;
		rawAppraiser = (full.appraiser.ms - msPooled) / (p * r);
		rawPart = (full.part.ms - msPooled) / (o * r);
		rawInteraction = null;
	} else {
		varRepeat = msError;
		rawInteraction = (msInteraction - msError) / r;
		rawAppraiser = (full.appraiser.ms - msInteraction) / (p * r);
		rawPart = (full.part.ms - msInteraction) / (o * r);
	}
	const varAppraiser = Math.max(0, rawAppraiser);
	const varInteraction = rawInteraction === null ? null : Math.max(0, rawInteraction);
	const varPart = Math.max(0, rawPart);
	const varReproducibility = varAppraiser + (varInteraction ?? 0);
	const varGrr = varRepeat + varReproducibility;
	const varTotal = varGrr + varPart;
	if (!(varTotal > 0)) {
		return {
			ok: false,
			error: {
				code: 'no-variation',
				message: 'All variance components are zero (the measurements do not vary), so no percentages exist.'
			}
		};
	}

	const sdTotal = Math.sqrt(varTotal);
	const k = common.multiplier;
	const tolerance = common.tolerance;
	const component = (variance: number, truncatedAtZero: boolean): VarianceComponent => {
		const stdDev = Math.sqrt(variance);
		return {
			variance,
			stdDev,
			studyVariation: k * stdDev,
			pctContribution: (100 * variance) / varTotal,
			pctStudyVariation: (100 * stdDev) / sdTotal,
			pctTolerance: tolerance === null ? null : (100 * k * stdDev) / tolerance,
			truncatedAtZero
		};
	};
	const components: AnovaVarianceComponents = {
		totalGrr: component(varGrr, false),
		repeatability: component(varRepeat, false),
		reproducibility: component(varReproducibility, false),
		appraiser: component(varAppraiser, rawAppraiser < 0),
		partXAppraiser:
			varInteraction === null ? null : component(varInteraction, (rawInteraction ?? 0) < 0),
		partToPart: component(varPart, rawPart < 0),
		total: component(varTotal, false)
	};
	const ndc = numberOfDistinctCategories(components.partToPart.stdDev, components.totalGrr.stdDev);
	const verdict = judgeStudy(
		components.totalGrr.pctStudyVariation,
		components.totalGrr.pctTolerance,
		ndc
	);

	return {
		ok: true,
		value: {
			design: { parts: layout.parts, appraisers: layout.appraisers, trials: layout.trials },
			settings: { alpha, studyVariationMultiplier: k, tolerance, mainEffectDenominator },
			full,
			interactionPooled,
			reduced,
			components,
			ndc,
			verdict
		}
	};
}
