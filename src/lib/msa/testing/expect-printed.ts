/**
 * Test support only: comparison at the precision a publication printed, and a deep scan for
 * NaN/Infinity in a result, so every test can assert "never NaN out".
 */
import { expect } from 'vitest';

/**
 * Asserts that `actual` rounds to `printed` at the printed precision: decimals for plain
 * literals, significant digits of the mantissa for exponent literals (2.29e-15). JSON drops
 * trailing zeros (162.270 becomes 162.27), which only makes the check looser, never wrong.
 */
export function expectPrinted(actual: number | null | undefined, printed: number, label = ''): void {
	expect(actual, label).not.toBeNull();
	expect(actual, label).not.toBeUndefined();
	const text = String(printed);
	let halfUnit: number;
	const exp = text.match(/^-?\d(?:\.(\d+))?e([+-]\d+)$/);
	if (exp) {
		const mantissaDecimals = exp[1]?.length ?? 0;
		halfUnit = 0.5 * 10 ** (Number(exp[2]) - mantissaDecimals);
	} else {
		const decimals = text.split('.')[1]?.length ?? 0;
		halfUnit = 0.5 * 10 ** -decimals;
	}
	const diff = Math.abs((actual ?? Number.NaN) - printed);
	// The 1e-9 relative slack absorbs binary representation of the printed literal only.
	expect(diff, `${label}: ${actual} should print as ${printed}`).toBeLessThanOrEqual(
		halfUnit * (1 + 1e-9) + Math.abs(printed) * 1e-12
	);
}

/** Paths of every non-finite number inside a plain-data value. */
export function nonFiniteNumbers(value: unknown, path = '$'): string[] {
	if (typeof value === 'number') return Number.isFinite(value) ? [] : [path];
	if (Array.isArray(value)) return value.flatMap((v, i) => nonFiniteNumbers(v, `${path}[${i}]`));
	if (typeof value === 'object' && value !== null) {
		return Object.entries(value).flatMap(([k, v]) => nonFiniteNumbers(v, `${path}.${k}`));
	}
	return [];
}
