/**
 * Gauge R&R by the average-and-range method (AIAG MSA Reference Manual, 4th ed., 2010, ch. III
 * section B): ranges of the trials in each part/appraiser cell give repeatability, the spread of
 * the appraiser averages gives reproducibility, the range of the part averages part variation.
 * EV, AV, GRR, PV and TV are 1-sigma values (K = 1/d2 or 1/d2*); the study variation is the
 * multiplier (6 by default) times them. Intermediates are not rounded (the manual's sheet
 * rounds them, which moves the results in the 4th-5th digit).
 */
import { d4Factor, k1Factor, kFromD2Star, MAX_TABLE_N } from './constants';
import { buildLayout, mean, requireLevels } from './design';
import type { MsaResult, MsaRow, MsaVerdict } from './types';
import {
	isMsaError,
	judgeStudy,
	numberOfDistinctCategories,
	resolveStudyOptions,
	type StudyOptions
} from './verdict';

export interface AppraiserSummary {
	appraiser: string;
	/** Average of the trials per part, in the order of design.parts. */
	partAverages: number[];
	/** Range (max - min) of the trials per part, in the order of design.parts. */
	partRanges: number[];
	/** X-bar of the appraiser: mean over all parts and trials. */
	average: number;
	/** R-bar of the appraiser: mean of its part ranges. */
	averageRange: number;
}

export interface RangeAboveLimit {
	part: string;
	appraiser: string;
	range: number;
}

export interface SigmaFigure {
	/** 1-sigma value. */
	sigma: number;
	/** multiplier x sigma. */
	studyVariation: number;
	/** 100 x sigma / TV. */
	pctTotalVariation: number;
	/** 100 x studyVariation / (usl - lsl); null without spec limits. */
	pctTolerance: number | null;
}

export interface AverageRangeOptions extends StudyOptions {
	/**
	 * D4 to use instead of the ASTM table value, e.g. 2.58 to reproduce the AIAG data sheet, which
	 * prints D4 = 3.27 (2 trials) and 2.58 (3 trials).
	 */
	d4?: number;
}

export interface AverageRangeStudy {
	design: { parts: string[]; appraisers: string[]; trials: number[] };
	settings: {
		studyVariationMultiplier: number;
		tolerance: number | null;
		d4: number;
		k1: number;
		k2: number;
		k3: number;
	};
	appraisers: AppraiserSummary[];
	/** Mean per part over all appraisers and trials, in the order of design.parts. */
	partAverages: number[];
	grandAverage: number;
	/** R-double-bar: mean of the appraisers' average ranges. */
	rBarBar: number;
	/** Largest minus smallest appraiser average. */
	xBarDiff: number;
	/** Rp: largest minus smallest part average. */
	rangeOfPartAverages: number;
	/** UCL of the ranges, D4 x R-double-bar. */
	uclRange: number;
	/** Cells whose range exceeds uclRange (to be investigated: re-measure or discard). */
	rangesAboveUcl: RangeAboveLimit[];
	ev: SigmaFigure;
	av: SigmaFigure;
	grr: SigmaFigure;
	pv: SigmaFigure;
	tv: SigmaFigure;
	/** True when (X-diff K2)^2 < EV^2/(n r) and AV was set to 0, as the manual prescribes. */
	avSetToZero: boolean;
	/** max(1, floor(1.41 PV / GRR)); null when GRR is 0. */
	ndc: number | null;
	verdict: MsaVerdict;
}

/**
 * Average-and-range gauge R&R. Assumes rows of one characteristic from a balanced crossed study
 * with 2 to 25 parts, appraisers (stations) and trials (the range of the constant tables); other
 * input, bad options, or data with no variation come back as a typed error.
 */
export function averageRangeStudy(
	rows: readonly MsaRow[],
	options: AverageRangeOptions = {}
): MsaResult<AverageRangeStudy> {
	const common = resolveStudyOptions(options);
	if (isMsaError(common)) return { ok: false, error: common };
	if (options.d4 !== undefined && !(Number.isFinite(options.d4) && options.d4 > 1)) {
		return { ok: false, error: { code: 'invalid-option', message: 'd4 must be a finite number greater than 1.' } };
	}
	const built = buildLayout(rows);
	if (!built.ok) return built;
	const layout = built.value;
	const levelError = requireLevels(layout, { parts: 2, appraisers: 2, trials: 2 }, 'The average-and-range method');
	if (levelError) return { ok: false, error: levelError };

	const nParts = layout.parts.length;
	const nAppraisers = layout.appraisers.length;
	const nTrials = layout.trials.length;
	const k1 = k1Factor(nTrials);
	const k2 = kFromD2Star(nAppraisers);
	const k3 = kFromD2Star(nParts);
	const tableD4 = d4Factor(nTrials);
	if (k1 === null || k2 === null || k3 === null || tableD4 === null) {
		return {
			ok: false,
			error: {
				code: 'too-many-levels',
				message: `The average-and-range constants are tabulated for 2 to ${MAX_TABLE_N} parts, appraisers and trials; use the ANOVA method for this design.`
			}
		};
	}
	const d4 = options.d4 ?? tableD4;

	const appraisers: AppraiserSummary[] = layout.appraisers.map((appraiser, a) => {
		const partAverages = layout.values.map((byAppraiser) => mean(byAppraiser[a] ?? []));
		const partRanges = layout.values.map((byAppraiser) => {
			const trials = byAppraiser[a] ?? [];
			return Math.max(...trials) - Math.min(...trials);
		});
		return {
			appraiser,
			partAverages,
			partRanges,
			average: mean(partAverages),
			averageRange: mean(partRanges)
		};
	});
	const partAverages = layout.parts.map((_, p) => mean(appraisers.map((s) => s.partAverages[p] ?? 0)));
	const grandAverage = mean(partAverages);
	const rBarBar = mean(appraisers.map((s) => s.averageRange));
	const appraiserAverages = appraisers.map((s) => s.average);
	const xBarDiff = Math.max(...appraiserAverages) - Math.min(...appraiserAverages);
	const rangeOfPartAverages = Math.max(...partAverages) - Math.min(...partAverages);
	const uclRange = d4 * rBarBar;
	const rangesAboveUcl: RangeAboveLimit[] = [];
	layout.parts.forEach((part, p) =>
		appraisers.forEach((s) => {
			const range = s.partRanges[p] ?? 0;
			if (range > uclRange) rangesAboveUcl.push({ part, appraiser: s.appraiser, range });
		})
	);

	const ev = rBarBar * k1;
	const radicand = (xBarDiff * k2) ** 2 - (ev * ev) / (nParts * nTrials);
	const avSetToZero = radicand < 0;
	const av = avSetToZero ? 0 : Math.sqrt(radicand);
	const grr = Math.sqrt(ev * ev + av * av);
	const pv = rangeOfPartAverages * k3;
	const tv = Math.sqrt(grr * grr + pv * pv);
	if (!(tv > 0)) {
		return {
			ok: false,
			error: { code: 'no-variation', message: 'Total variation is zero (the measurements do not vary), so no percentages exist.' }
		};
	}
	const k = common.multiplier;
	const tolerance = common.tolerance;
	const figure = (sigma: number): SigmaFigure => ({
		sigma,
		studyVariation: k * sigma,
		pctTotalVariation: (100 * sigma) / tv,
		pctTolerance: tolerance === null ? null : (100 * k * sigma) / tolerance
	});
	const grrFigure = figure(grr);
	const ndc = numberOfDistinctCategories(pv, grr);

	return {
		ok: true,
		value: {
			design: { parts: layout.parts, appraisers: layout.appraisers, trials: layout.trials },
			settings: { studyVariationMultiplier: k, tolerance, d4, k1, k2, k3 },
			appraisers,
			partAverages,
			grandAverage,
			rBarBar,
			xBarDiff,
			rangeOfPartAverages,
			uclRange,
			rangesAboveUcl,
			ev: figure(ev),
			av: figure(av),
			grr: grrFigure,
			pv: figure(pv),
			tv: figure(tv),
			avSetToZero,
			ndc,
			verdict: judgeStudy(grrFigure.pctTotalVariation, grrFigure.pctTolerance, ndc)
		}
	};
}
