/**
 * Validation of study rows and their arrangement into a complete part x appraiser x trial grid,
 * shared by every MSA analysis so they all refuse the same bad input the same way.
 */
import type { CellRef, MsaError, MsaResult, MsaRow } from './types';

/** A validated, balanced study: values[p][a][t] follows the order of parts, appraisers, trials. */
export interface StudyLayout {
	parts: string[];
	appraisers: string[];
	trials: number[];
	values: number[][][];
}

function fail<T>(error: MsaError): MsaResult<T> {
	return { ok: false, error };
}

/**
 * Arranges rows into a balanced grid. Assumes nothing about the rows (they may come from JSON):
 * parts and appraisers must be non-empty strings, trials integers, values finite numbers, and
 * every part x appraiser x trial combination present exactly once. Parts and appraisers keep
 * the order of first appearance; trials are sorted ascending.
 */
export function buildLayout(rows: readonly MsaRow[]): MsaResult<StudyLayout> {
	if (!Array.isArray(rows) || rows.length === 0) {
		return fail({ code: 'empty', message: 'The study has no measurements.' });
	}
	const badRows: number[] = [];
	const nonFinite: number[] = [];
	rows.forEach((row: unknown, index) => {
		if (typeof row !== 'object' || row === null) {
			badRows.push(index);
			return;
		}
		const r = row as Record<string, unknown>;
		if (
			typeof r.part !== 'string' ||
			r.part.length === 0 ||
			typeof r.appraiser !== 'string' ||
			r.appraiser.length === 0 ||
			typeof r.trial !== 'number' ||
			!Number.isInteger(r.trial) ||
			typeof r.value !== 'number'
		) {
			badRows.push(index);
		} else if (!Number.isFinite(r.value)) {
			nonFinite.push(index);
		}
	});
	if (badRows.length > 0) {
		return fail({
			code: 'invalid-row',
			message: `${badRows.length} row(s) lack a non-empty part and appraiser, an integer trial or a numeric value.`,
			rowIndices: badRows
		});
	}
	if (nonFinite.length > 0) {
		return fail({
			code: 'non-finite-value',
			message: `${nonFinite.length} measurement(s) are NaN or infinite.`,
			rowIndices: nonFinite
		});
	}

	const parts: string[] = [];
	const appraisers: string[] = [];
	const trialSet = new Set<number>();
	const partIndex = new Map<string, number>();
	const appraiserIndex = new Map<string, number>();
	for (const row of rows) {
		if (!partIndex.has(row.part)) {
			partIndex.set(row.part, parts.length);
			parts.push(row.part);
		}
		if (!appraiserIndex.has(row.appraiser)) {
			appraiserIndex.set(row.appraiser, appraisers.length);
			appraisers.push(row.appraiser);
		}
		trialSet.add(row.trial);
	}
	const trials = [...trialSet].sort((a, b) => a - b);
	const trialIndex = new Map(trials.map((t, i) => [t, i]));

	// NaN marks an empty cell while filling; every cell is checked before the grid is returned.
	const values: number[][][] = parts.map(() =>
		appraisers.map(() => trials.map(() => Number.NaN))
	);
	const duplicates: CellRef[] = [];
	for (const row of rows) {
		const cellsOfPart = values[partIndex.get(row.part) ?? -1];
		const cellsOfPair = cellsOfPart?.[appraiserIndex.get(row.appraiser) ?? -1];
		const t = trialIndex.get(row.trial);
		if (cellsOfPair === undefined || t === undefined) continue;
		if (!Number.isNaN(cellsOfPair[t] ?? Number.NaN)) {
			duplicates.push({ part: row.part, appraiser: row.appraiser, trial: row.trial });
		}
		cellsOfPair[t] = row.value;
	}
	if (duplicates.length > 0) {
		return fail({
			code: 'duplicate-cell',
			message: `${duplicates.length} part/appraiser/trial combination(s) were measured more than once.`,
			cells: duplicates
		});
	}
	const missing: CellRef[] = [];
	parts.forEach((part, p) =>
		appraisers.forEach((appraiser, a) =>
			trials.forEach((trial, t) => {
				if (Number.isNaN(values[p]?.[a]?.[t] ?? Number.NaN)) missing.push({ part, appraiser, trial });
			})
		)
	);
	if (missing.length > 0) {
		return fail({
			code: 'unbalanced',
			message: `The design is unbalanced: ${missing.length} of ${parts.length * appraisers.length * trials.length} part/appraiser/trial cells have no measurement.`,
			cells: missing
		});
	}
	return { ok: true, value: { parts, appraisers, trials, values } };
}

/** Refuses a layout with fewer levels than an analysis needs. Assumes a layout from buildLayout. */
export function requireLevels(
	layout: StudyLayout,
	minimum: { parts: number; appraisers: number; trials: number },
	analysis: string
): MsaError | null {
	if (layout.parts.length < minimum.parts) {
		return {
			code: 'too-few-parts',
			message: `${analysis} needs at least ${minimum.parts} parts; the study has ${layout.parts.length}.`
		};
	}
	if (layout.appraisers.length < minimum.appraisers) {
		return {
			code: 'too-few-appraisers',
			message: `${analysis} needs at least ${minimum.appraisers} appraisers (stations); the study has ${layout.appraisers.length}.`
		};
	}
	if (layout.trials.length < minimum.trials) {
		return {
			code: 'too-few-trials',
			message: `${analysis} needs at least ${minimum.trials} trials per part and appraiser; the study has ${layout.trials.length}.`
		};
	}
	return null;
}

/** Arithmetic mean. Assumes a non-empty array of finite numbers. */
export function mean(xs: readonly number[]): number {
	let sum = 0;
	for (const x of xs) sum += x;
	return sum / xs.length;
}

/** Sample variance (divisor n - 1). Assumes at least two finite numbers. */
export function sampleVariance(xs: readonly number[]): number {
	const m = mean(xs);
	let ss = 0;
	for (const x of xs) ss += (x - m) * (x - m);
	return ss / (xs.length - 1);
}
