// Bench C–V files: CSV (RFC 4180) text → rows with line numbers → parts grouped by serial, every
// problem reported with the line it is on. Pure (no I/O, no clock: the default test time is passed in).
//
// Columns (header row required, names case-insensitive, any order):
//   serial, biasV, capacitanceF            required on every row (SI: volts, farads)
//   q, leakageA, temperatureC, testedAt    optional; leakageA, temperatureC and testedAt belong to the
//                                          part: give them on one row of the part or equal on each
// One row per measured point; a part's rows must be consecutive. Resonance readings are not
// accepted: a bench meter reads capacitance, and a resonance needs a station's calibration.
import { z } from 'zod';

/** Largest file accepted (bytes) and most data rows (our choice: a few lots' worth of bench parts). */
export const BENCH_MAX_BYTES = 2 * 1024 * 1024; // = the server's BODY_SIZE_LIMIT (2M)
export const BENCH_MAX_ROWS = 50_000;
export const BENCH_MAX_POINTS_PER_PART = 64;

export const BENCH_COLUMNS = ['serial', 'biasV', 'capacitanceF', 'q', 'leakageA', 'temperatureC', 'testedAt'] as const;
type Column = (typeof BENCH_COLUMNS)[number];
const REQUIRED: readonly Column[] = ['serial', 'biasV', 'capacitanceF'];

export type CsvRecord = { line: number; cells: string[] };
export type RowError = { line: number; column: string | null; message: string };

/**
 * Splits CSV text into records (RFC 4180: quoted fields may hold commas, doubled quotes and line
 * breaks). `line` is the 1-based line where the record starts. Blank lines are skipped.
 */
export function parseCsv(text: string): { records: CsvRecord[]; error: RowError | null } {
	const records: CsvRecord[] = [];
	let line = 1;
	let i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
	while (i < text.length) {
		const start = line;
		const cells: string[] = [];
		let cell = '';
		for (;;) {
			if (text[i] === '"') {
				i++;
				for (;;) {
					if (i >= text.length) return { records, error: { line: start, column: null, message: 'A quoted field is not closed' } };
					const ch = text[i];
					if (ch === '"') {
						if (text[i + 1] === '"') {
							cell += '"';
							i += 2;
							continue;
						}
						i++;
						break;
					}
					if (ch === '\n') line++;
					cell += ch;
					i++;
				}
			}
			while (i < text.length && text[i] !== ',' && text[i] !== '\n' && text[i] !== '\r') {
				if (text[i] === '"') return { records, error: { line, column: null, message: 'A quote inside an unquoted field: quote the whole field and double the quote' } };
				cell += text[i];
				i++;
			}
			cells.push(cell);
			cell = '';
			if (text[i] === ',') {
				i++;
				continue;
			}
			break;
		}
		if (text[i] === '\r') i++;
		if (text[i] === '\n') i++;
		line++;
		if (!(cells.length === 1 && cells[0]?.trim() === '')) records.push({ line: start, cells });
	}
	return { records, error: null };
}

const num = (name: string) =>
	z
		.string()
		.trim()
		.min(1, { error: `${name} is empty` })
		.transform((s, ctx) => {
			const v = Number(s);
			if (!Number.isFinite(v)) {
				ctx.addIssue({ code: 'custom', message: `${name} “${s}” is not a number` });
				return z.NEVER;
			}
			return v;
		});
const optionalNum = (name: string) => z.union([z.literal('').transform(() => undefined), num(name)]);

/** One data row, as text cells by column name (blank optional cells are absent). */
export const BenchRow = z.object({
	serial: z.string().trim().min(1, { error: 'serial is empty' }).max(80, { error: 'serial is longer than 80 characters' }),
	biasV: num('biasV').pipe(z.number().min(0, { error: 'biasV is a reverse bias, 0 or more' }).max(1000, { error: 'biasV above 1000 V' })),
	capacitanceF: num('capacitanceF').pipe(
		z.number().positive({ error: 'capacitanceF must be above 0' }).max(1e-6, { error: 'capacitanceF is in farads (12 pF is 12e-12); this value is above 1 µF' })
	),
	q: optionalNum('q').pipe(z.number().positive({ error: 'q must be above 0' }).max(1e6).optional()),
	leakageA: optionalNum('leakageA').pipe(z.number().min(0, { error: 'leakageA must be 0 or more' }).max(1, { error: 'leakageA is in amperes; above 1 A' }).optional()),
	temperatureC: optionalNum('temperatureC').pipe(z.number().min(-60, { error: 'temperatureC below −60 °C' }).max(200, { error: 'temperatureC above 200 °C' }).optional()),
	testedAt: z
		.string()
		.trim()
		.transform((s) => (s === '' ? undefined : s))
		.pipe(z.iso.datetime({ offset: true, error: 'testedAt must be an ISO 8601 time with a zone, e.g. 2026-03-02T08:15:00Z' }).optional())
});
export type BenchRowValue = z.infer<typeof BenchRow>;

export type BenchPart = {
	serial: string;
	/** line of the part's first row */
	line: number;
	testedAt: string;
	leakageA: number | null;
	temperatureC: number | null;
	points: { biasV: number; capacitanceF: number; q: number | null }[];
};

export type BenchParse = {
	columns: Column[];
	/** the first data rows as read (for the preview), cells as text */
	preview: { line: number; cells: Record<string, string> }[];
	rows: number;
	parts: BenchPart[];
	errors: RowError[];
};

/** Errors beyond this many are counted, not listed (the first ones say what to fix). */
export const MAX_LISTED_ERRORS = 200;

/**
 * Parses and validates a bench file and groups its rows into parts. Every bad row is reported
 * (with its line and column); `parts` is meaningful only when `errors` is empty.
 */
export function parseBenchCsv(text: string, opts: { defaultTestedAt: string; previewRows?: number }): BenchParse {
	const out: BenchParse = { columns: [], preview: [], rows: 0, parts: [], errors: [] };
	const push = (e: RowError) => {
		if (out.errors.length < MAX_LISTED_ERRORS) out.errors.push(e);
	};
	const { records, error } = parseCsv(text);
	if (error) push(error);
	const header = records[0];
	if (!header) {
		if (!error) push({ line: 1, column: null, message: 'The file is empty: the first line must name the columns' });
		return out;
	}
	const known = new Map(BENCH_COLUMNS.map((c) => [c.toLowerCase(), c]));
	const index = new Map<Column, number>();
	header.cells.forEach((raw, i) => {
		const name = raw.trim();
		const col = known.get(name.toLowerCase());
		if (!col) push({ line: header.line, column: name, message: `Unknown column “${name}”; the columns are ${BENCH_COLUMNS.join(', ')}` });
		else if (index.has(col)) push({ line: header.line, column: col, message: `Column ${col} appears twice` });
		else index.set(col, i);
	});
	for (const c of REQUIRED) if (!index.has(c)) push({ line: header.line, column: c, message: `Column ${c} is missing` });
	out.columns = BENCH_COLUMNS.filter((c) => index.has(c));
	if (out.errors.length) return out;
	const data = records.slice(1);
	out.rows = data.length;
	if (data.length === 0) push({ line: header.line + 1, column: null, message: 'No data rows after the header' });
	if (data.length > BENCH_MAX_ROWS) {
		push({ line: data[BENCH_MAX_ROWS]?.line ?? 0, column: null, message: `More than ${BENCH_MAX_ROWS} rows: split the file` });
		return out;
	}
	const seenSerial = new Map<string, number>();
	let part: BenchPart | null = null;
	const given = { leakageA: false, temperatureC: false, testedAt: false };
	const finish = () => {
		if (part) out.parts.push({ ...part, testedAt: part.testedAt || opts.defaultTestedAt });
	};
	for (const rec of data) {
		const cells: Record<string, string> = {};
		for (const [c, i] of index) cells[c] = rec.cells[i] ?? '';
		if (out.preview.length < (opts.previewRows ?? 20)) out.preview.push({ line: rec.line, cells: { ...cells } });
		for (const c of BENCH_COLUMNS) cells[c] ??= '';
		if (rec.cells.length !== header.cells.length) {
			push({ line: rec.line, column: null, message: `${rec.cells.length} fields where the header has ${header.cells.length}` });
			continue;
		}
		const parsed = BenchRow.safeParse(cells);
		if (!parsed.success) {
			for (const issue of parsed.error.issues) push({ line: rec.line, column: String(issue.path[0] ?? ''), message: issue.message });
			continue;
		}
		const r = parsed.data;
		if (!part || part.serial !== r.serial) {
			const earlier = seenSerial.get(r.serial);
			if (earlier !== undefined) {
				push({ line: rec.line, column: 'serial', message: `Part ${r.serial} already ended at an earlier row (from line ${earlier}): keep a part’s rows together` });
				continue;
			}
			finish();
			seenSerial.set(r.serial, rec.line);
			part = { serial: r.serial, line: rec.line, testedAt: '', leakageA: null, temperatureC: null, points: [] };
			given.leakageA = given.temperatureC = given.testedAt = false;
		}
		const p: BenchPart = part;
		if (p.points.some((q) => q.biasV === r.biasV)) {
			push({ line: rec.line, column: 'biasV', message: `Part ${r.serial} has ${r.biasV} V twice` });
			continue;
		}
		if (p.points.length >= BENCH_MAX_POINTS_PER_PART) {
			push({ line: rec.line, column: null, message: `Part ${r.serial} has more than ${BENCH_MAX_POINTS_PER_PART} points` });
			continue;
		}
		const agree = <K extends 'leakageA' | 'temperatureC'>(k: K, v: number | undefined) => {
			if (v === undefined) return;
			if (given[k] && p[k] !== v) push({ line: rec.line, column: k, message: `Part ${r.serial} has another ${k} on an earlier row; give it once per part` });
			else [p[k], given[k]] = [v, true];
		};
		agree('leakageA', r.leakageA);
		agree('temperatureC', r.temperatureC);
		if (r.testedAt !== undefined) {
			const iso = new Date(r.testedAt).toISOString();
			if (given.testedAt && p.testedAt !== iso) push({ line: rec.line, column: 'testedAt', message: `Part ${r.serial} has another testedAt on an earlier row; give it once per part` });
			else [p.testedAt, given.testedAt] = [iso, true];
		}
		p.points.push({ biasV: r.biasV, capacitanceF: r.capacitanceF, q: r.q ?? null });
	}
	finish();
	return out;
}
