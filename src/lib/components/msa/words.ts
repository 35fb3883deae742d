// Number words of the study screens.
import type { GrrBand } from '$lib/msa';

export const fmt = (v: number | null | undefined, digits = 4): string =>
	v === null || v === undefined || !Number.isFinite(v) ? '—' : Math.abs(v) >= 1e6 || (v !== 0 && Math.abs(v) < 1e-4) ? v.toExponential(digits - 1) : Number(v.toPrecision(digits)).toString();
export const pct = (v: number | null | undefined): string => (v === null || v === undefined || !Number.isFinite(v) ? '—' : `${v.toFixed(2)} %`);
export const pval = (p: number | null): string => (p === null ? '—' : p < 0.0001 ? '< 0.0001' : p.toFixed(4));

export const BAND_CLASS: Record<GrrBand | 'indeterminate', string> = {
	acceptable: 'bg-pass-50 text-pass-700',
	conditional: 'bg-warn-50 text-warn-700',
	'not-acceptable': 'bg-fail-50 text-fail-700',
	indeterminate: 'bg-paper-dim text-ink-soft'
};
