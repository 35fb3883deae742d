// CSV (RFC 4180) of a lot's parts, SI units, one column per bias point.
import type { UnitRow } from './lots';

function cell(v: unknown): string {
	if (v === null || v === undefined) return '';
	let s = typeof v === 'number' ? String(v) : String(v);
	// Spreadsheet formula injection: a text cell starting with = + - @ is prefixed with '.
	if (typeof v === 'string' && /^[=+\-@\t\r]/.test(s)) s = `'${s}`;
	return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** The CSV text: header row, then one row per part. Bias columns come from the parts' sweeps. */
export function unitsCsv(units: UnitRow[]): string {
	const biases = [...new Set(units.flatMap((u) => u.biasV))].sort((a, b) => a - b);
	const header = ['serial', 'kind', 'station', 'testedAt', 'bin', 'pass', 'leakageA', 'temperatureC', 'cj0F', 'vjV', 'm', 'cpF', 'fitRmsPct',
		...biases.map((b) => `capacitanceF@${b}V`), ...biases.map((b) => `q@${b}V`), 'failures'];
	const lines = [header.map(cell).join(',')];
	for (const u of units) {
		const at = (arr: (number | null)[] | null, b: number) => {
			const i = u.biasV.indexOf(b);
			return i < 0 || !arr ? null : (arr[i] ?? null);
		};
		lines.push(
			[
				u.serial, u.kind, u.station, u.testedAt, u.bin, u.pass, u.leakageA, u.temperatureC,
				u.fit?.cj0F, u.fit?.vjV, u.fit?.m, u.fit?.cpF, u.fit?.rmsPct,
				...biases.map((b) => at(u.capacitanceF, b)), ...biases.map((b) => at(u.q, b)),
				(u.failures as { test?: string }[]).map((f) => f.test ?? '').join('; ')
			].map(cell).join(',')
		);
	}
	return lines.join('\r\n') + '\r\n';
}

/** CSV text of any table: a header row, then the rows, each cell quoted and guarded as above. */
export function tableCsv(header: string[], rows: unknown[][]): string {
	return [header, ...rows].map((r) => r.map(cell).join(',')).join('\r\n') + '\r\n';
}
