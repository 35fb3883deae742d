// Number display for charts: 4 significant digits, no exponent for the magnitudes we chart.

/** A value with 4 significant digits ("—" for missing or non-finite). */
export function sig4(v: number | null | undefined): string {
	if (v === null || v === undefined || !Number.isFinite(v)) return '—';
	if (v === 0) return '0';
	const abs = Math.abs(v);
	if (abs >= 1e-4 && abs < 1e6) return Number(v.toPrecision(4)).toString();
	return v.toPrecision(4);
}

/** A value with its unit, e.g. "25.43 pF"; unitless values stay bare. */
export function withUnit(v: number | null | undefined, unit: string): string {
	const s = sig4(v);
	return unit && s !== '—' ? `${s} ${unit}` : s;
}
