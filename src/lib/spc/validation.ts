/** Input checks shared by the SPC modules; every failure is a typed error value. */
import type { BaselineSelection, SpcError, SpcErrorCode, SpcResult } from './types';

/** Builds a failed result; assumes nothing. */
export function fail<T>(code: SpcErrorCode, message: string): SpcResult<T> {
	return { ok: false, error: { code, message } };
}

/** Builds a successful result; assumes nothing. */
export function succeed<T>(value: T): SpcResult<T> {
	return { ok: true, value };
}

/** First non-finite entry of the listed indices, as an error; assumes indices are in range. */
export function firstNonFinite(values: readonly number[], indices: readonly number[]): SpcError | null {
	for (const i of indices) {
		const v = values[i];
		if (v === undefined || !Number.isFinite(v)) {
			return { code: 'NON_FINITE_VALUE', message: `value at index ${i} is ${String(v)}, not a finite number` };
		}
	}
	return null;
}

/** Error if any value is not finite (NaN, +-Infinity); assumes a plain array. */
export function checkAllFinite(values: readonly number[]): SpcError | null {
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		if (v === undefined || !Number.isFinite(v)) {
			return { code: 'NON_FINITE_VALUE', message: `value at index ${i} is ${String(v)}, not a finite number` };
		}
	}
	return null;
}

export interface ResolvedSelection {
	readonly fromIndex: number;
	readonly toIndex: number;
	readonly excluded: ReadonlySet<number>;
	/** Included indices in ascending order. */
	readonly included: readonly number[];
}

/**
 * Resolves a baseline selection against a series of `length` points. Assumes nothing:
 * non-integer or out-of-range bounds, exclusions outside the range and exclusions without
 * a reason are INVALID_SELECTION errors (an exclusion must say why, for the audit trail).
 */
export function resolveSelection(length: number, selection: BaselineSelection | undefined): SpcResult<ResolvedSelection> {
	const fromIndex = selection?.fromIndex ?? 0;
	const toIndex = selection?.toIndex ?? length;
	if (!Number.isInteger(fromIndex) || !Number.isInteger(toIndex) || fromIndex < 0 || toIndex > length || fromIndex > toIndex) {
		return fail('INVALID_SELECTION', `range [${fromIndex}, ${toIndex}) is not inside a series of ${length} points`);
	}
	const excluded = new Set<number>();
	for (const exclusion of selection?.exclusions ?? []) {
		if (!Number.isInteger(exclusion.index) || exclusion.index < fromIndex || exclusion.index >= toIndex) {
			return fail('INVALID_SELECTION', `excluded index ${exclusion.index} is outside the range [${fromIndex}, ${toIndex})`);
		}
		if (exclusion.reason.trim() === '') {
			return fail('INVALID_SELECTION', `excluded index ${exclusion.index} has no reason`);
		}
		excluded.add(exclusion.index);
	}
	const included: number[] = [];
	for (let i = fromIndex; i < toIndex; i++) if (!excluded.has(i)) included.push(i);
	return succeed({ fromIndex, toIndex, excluded, included });
}
