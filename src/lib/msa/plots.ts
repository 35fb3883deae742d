/**
 * Plot data for a gauge study (series only; rendering belongs to the UI): measurements by part
 * and by appraiser (station), the part x appraiser interaction plot, the components-of-variation
 * bars and the range chart of the average-and-range method.
 */
import type { AverageRangeStudy } from './average-range';
import type { GaugeRrAnova } from './anova';
import { buildLayout, mean } from './design';
import type { MsaResult, MsaRow } from './types';

export interface MeasurementsOfPart {
	part: string;
	/** Mean of all appraisers and trials on this part. */
	mean: number;
	points: { appraiser: string; trial: number; value: number }[];
}

export interface MeasurementsOfAppraiser {
	appraiser: string;
	/** Mean of all parts and trials of this appraiser. */
	mean: number;
	points: { part: string; trial: number; value: number }[];
}

export interface InteractionPlot {
	/** x axis, in study order. */
	parts: string[];
	/** One line per appraiser: mean of the trials per part, aligned with parts. */
	series: { appraiser: string; means: number[] }[];
}

export interface StudyPlots {
	byPart: MeasurementsOfPart[];
	byAppraiser: MeasurementsOfAppraiser[];
	interaction: InteractionPlot;
}

/**
 * Measurement series of a study. Assumes rows that pass the same balanced-design validation as
 * the analyses (so the plots show exactly the data analysed); anything else is a typed error.
 */
export function studyPlots(rows: readonly MsaRow[]): MsaResult<StudyPlots> {
	const built = buildLayout(rows);
	if (!built.ok) return built;
	const { parts, appraisers, trials, values } = built.value;
	const byPart = parts.map((part, p) => {
		const points = appraisers.flatMap((appraiser, a) =>
			trials.map((trial, t) => ({ appraiser, trial, value: values[p]?.[a]?.[t] ?? 0 }))
		);
		return { part, mean: mean(points.map((x) => x.value)), points };
	});
	const byAppraiser = appraisers.map((appraiser, a) => {
		const points = parts.flatMap((part, p) =>
			trials.map((trial, t) => ({ part, trial, value: values[p]?.[a]?.[t] ?? 0 }))
		);
		return { appraiser, mean: mean(points.map((x) => x.value)), points };
	});
	const interaction: InteractionPlot = {
		parts,
		series: appraisers.map((appraiser, a) => ({
			appraiser,
			means: parts.map((_, p) => mean(values[p]?.[a] ?? []))
		}))
	};
	return { ok: true, value: { byPart, byAppraiser, interaction } };
}

export type VariationSource = 'totalGrr' | 'repeatability' | 'reproducibility' | 'partToPart';

export interface ComponentBar {
	source: VariationSource;
	pctContribution: number;
	pctStudyVariation: number;
	/** null without spec limits. */
	pctTolerance: number | null;
}

const SOURCES: readonly VariationSource[] = ['totalGrr', 'repeatability', 'reproducibility', 'partToPart'];

/** Components-of-variation bars of an ANOVA study. Assumes a successful gaugeRrAnova result. */
export function anovaComponentBars(study: GaugeRrAnova): ComponentBar[] {
	return SOURCES.map((source) => {
		const c = study.components[source];
		return {
			source,
			pctContribution: c.pctContribution,
			pctStudyVariation: c.pctStudyVariation,
			pctTolerance: c.pctTolerance
		};
	});
}

/**
 * Components-of-variation bars of an average-and-range study (EV, AV, GRR, PV). Assumes a
 * successful averageRangeStudy result; % contribution is the square of the % of total
 * variation / 100, because the method's figures are standard deviations.
 */
export function averageRangeComponentBars(study: AverageRangeStudy): ComponentBar[] {
	const figures = {
		totalGrr: study.grr,
		repeatability: study.ev,
		reproducibility: study.av,
		partToPart: study.pv
	};
	return SOURCES.map((source) => {
		const f = figures[source];
		return {
			source,
			pctContribution: (f.pctTotalVariation * f.pctTotalVariation) / 100,
			pctStudyVariation: f.pctTotalVariation,
			pctTolerance: f.pctTolerance
		};
	});
}

export interface RangeChart {
	centreLine: number;
	upperLimit: number;
	/** Per appraiser, the cell ranges aligned with parts. */
	series: { appraiser: string; ranges: number[] }[];
	parts: string[];
}

/** Range chart of an average-and-range study. Assumes a successful averageRangeStudy result. */
export function rangeChart(study: AverageRangeStudy): RangeChart {
	return {
		centreLine: study.rBarBar,
		upperLimit: study.uclRange,
		parts: study.design.parts,
		series: study.appraisers.map((a) => ({ appraiser: a.appraiser, ranges: a.partRanges }))
	};
}
