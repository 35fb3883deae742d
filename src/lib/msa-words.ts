// The verdict words of gauge studies, shared by the screens and the PDF report. The bands
// themselves are common practice (see $lib/msa/verdict.ts).
import type { GrrBand } from '$lib/msa';

export const BAND_LABELS: Record<GrrBand | 'indeterminate', string> = {
	acceptable: 'Good',
	conditional: 'Conditional',
	'not-acceptable': 'Not acceptable',
	indeterminate: 'Indeterminate'
};
