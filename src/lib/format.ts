/** Engineering-unit display: the API speaks SI, people read pF, µH, nA. */
export function pF(farads: number | null | undefined, digits = 2): string {
	return farads === null || farads === undefined || !Number.isFinite(farads) ? '—' : `${(farads * 1e12).toFixed(digits)} pF`;
}
export function nF(farads: number | null | undefined, digits = 0): string {
	return farads === null || farads === undefined || !Number.isFinite(farads) ? '—' : `${(farads * 1e9).toFixed(digits)} nF`;
}
export function uH(henries: number | null | undefined, digits = 1): string {
	return henries === null || henries === undefined || !Number.isFinite(henries) ? '—' : `${(henries * 1e6).toFixed(digits)} µH`;
}
export const ARRANGEMENT_LABELS = {
	single: 'One part',
	parallel2: 'Two in parallel',
	antiseries2: 'Two back to back'
} as const;
export function dateTime(iso: string | null | undefined): string {
	if (!iso) return '—';
	const d = new Date(iso);
	return `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC`;
}
