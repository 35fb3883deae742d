// The pure part of measurement-system studies: which characteristics a study analyses, which cell
// a station measures next, the progress grid, and one characteristic's analysis assembled from
// $lib/msa (no statistics are computed here). No database, clock or randomness.
import { biasLabel } from '$lib/measure/spec';
import type { SpecPlan } from '$lib/measure/types';
import {
	anovaComponentBars,
	averageRangeComponentBars,
	averageRangeStudy,
	gaugeRrAnova,
	rangeChart,
	stationCorrelation,
	studyPlots,
	type AverageRangeStudy,
	type ComponentBar,
	type GaugeRrAnova,
	type GrrBand,
	type MsaError,
	type MsaRow,
	type MsaVerdict,
	type RangeChart,
	type SpecLimits,
	type StationCorrelation,
	type StudyPlots
} from '$lib/msa';
export { BAND_LABELS } from '$lib/msa-words';

/** Significance level for keeping the part x station interaction (pooled when p > alpha). */
export const INTERACTION_ALPHA = 0.05;

export type StudyCharacteristic = {
	name: string;
	/** 'pF' for capacitances (analysed in pF), '' for the ratio. */
	unit: 'pF' | '';
	/** Both spec limits in the analysed unit, or null when the plan gives fewer than two. */
	spec: SpecLimits | null;
	/** The value of one measured part, or null when its sweep lacks the bias. */
	value: (biasV: readonly number[], capacitanceF: readonly (number | null)[]) => number | null;
};

function capAt(biasV: readonly number[], capacitanceF: readonly (number | null)[], at: number): number | null {
	const i = biasV.findIndex((b) => Math.abs(b - at) <= 1e-6);
	const c = i < 0 ? null : (capacitanceF[i] ?? null);
	return c !== null && Number.isFinite(c) ? c : null;
}

/**
 * The analysed characteristics of a plan: C at every plan bias (in pF) and the capacitance ratio,
 * named as the control charts name them. Assumes a validated plan.
 */
export function studyCharacteristics(plan: SpecPlan): StudyCharacteristic[] {
	const out: StudyCharacteristic[] = plan.points.map((p) => ({
		name: `C@${biasLabel(p.biasV)}V`,
		unit: 'pF',
		spec: p.minF !== undefined && p.maxF !== undefined ? { lsl: p.minF * 1e12, usl: p.maxF * 1e12 } : null,
		value: (b, c) => {
			const v = capAt(b, c, p.biasV);
			return v === null ? null : v * 1e12;
		}
	}));
	const r = plan.ratio;
	if (r) {
		out.push({
			name: `ratio C${biasLabel(r.lowBiasV)}/C${biasLabel(r.highBiasV)}`,
			unit: '',
			spec: r.min !== undefined && r.max !== undefined ? { lsl: r.min, usl: r.max } : null,
			value: (b, c) => {
				const lo = capAt(b, c, r.lowBiasV);
				const hi = capAt(b, c, r.highBiasV);
				return lo !== null && hi !== null && hi > 0 ? lo / hi : null;
			}
		});
	}
	return out;
}

/**
 * The next cell a station measures: trial by trial, every part once per round in study order (so
 * a part's repeats are spread over the study, not taken back to back). `done` maps a serial to
 * how many trials this station has stored for it. Null when the station's row is complete.
 */
export function nextCell(serials: readonly string[], trials: number, done: ReadonlyMap<string, number>): { serial: string; trial: number } | null {
	for (let trial = 1; trial <= trials; trial++) {
		for (const serial of serials) if ((done.get(serial) ?? 0) < trial) return { serial, trial };
	}
	return null;
}

export type ProgressCell = { serial: string; station: string; trial: number; filled: boolean };

export type Progress = { filled: number; total: number; cells: ProgressCell[] };

/** The grid part x station x trial with the filled cells marked. Assumes stored trials are 1..trials. */
export function progressGrid(
	serials: readonly string[],
	stations: readonly string[],
	trials: number,
	stored: readonly { serial: string; station: string; trial: number }[]
): Progress {
	const have = new Set(stored.map((s) => `${s.serial}\u0000${s.station}\u0000${s.trial}`));
	const cells: ProgressCell[] = [];
	for (const serial of serials)
		for (const station of stations)
			for (let trial = 1; trial <= trials; trial++) cells.push({ serial, station, trial, filled: have.has(`${serial}\u0000${station}\u0000${trial}`) });
	const filled = cells.filter((c) => c.filled).length;
	return { filled, total: cells.length, cells };
}

const RANK: Record<GrrBand | 'indeterminate', number> = { acceptable: 0, conditional: 1, indeterminate: 2, 'not-acceptable': 3 };

/** The worst of several verdicts (an unknown one ranks below "not acceptable"); null for none. */
export function worstOverall(verdicts: readonly (GrrBand | 'indeterminate')[]): GrrBand | 'indeterminate' | null {
	return verdicts.reduce<GrrBand | 'indeterminate' | null>((w, v) => (w === null || RANK[v] > RANK[w] ? v : w), null);
}

type Outcome<T> = { ok: true; value: T } | { ok: false; error: MsaError };

export type CharacteristicAnalysis = {
	name: string;
	unit: 'pF' | '';
	spec: SpecLimits | null;
	anova: Outcome<GaugeRrAnova>;
	averageRange: Outcome<AverageRangeStudy>;
	plots: Outcome<StudyPlots>;
	anovaBars: ComponentBar[];
	averageRangeBars: ComponentBar[];
	rangeChart: RangeChart | null;
	correlation: Outcome<StationCorrelation>;
	/** The ANOVA method's verdict (the study's verdict), null when the ANOVA could not run. */
	verdict: MsaVerdict | null;
};

/**
 * One characteristic's analysis by both gauge R&R methods, the plots and the station correlation,
 * all from $lib/msa. Assumes rows of one characteristic; the library refuses incomplete grids.
 */
export function analyseCharacteristic(
	c: { name: string; unit: 'pF' | ''; spec: SpecLimits | null },
	rows: readonly MsaRow[],
	multiplier: number
): CharacteristicAnalysis {
	const common = { studyVariationMultiplier: multiplier, ...(c.spec ? { spec: c.spec } : {}) };
	const anova = gaugeRrAnova(rows, { ...common, alpha: INTERACTION_ALPHA });
	const averageRange = averageRangeStudy(rows, common);
	return {
		name: c.name,
		unit: c.unit,
		spec: c.spec,
		anova,
		averageRange,
		plots: studyPlots(rows),
		anovaBars: anova.ok ? anovaComponentBars(anova.value) : [],
		averageRangeBars: averageRange.ok ? averageRangeComponentBars(averageRange.value) : [],
		rangeChart: averageRange.ok ? rangeChart(averageRange.value) : null,
		correlation: stationCorrelation(rows),
		verdict: anova.ok ? anova.value.verdict : null
	};
}
