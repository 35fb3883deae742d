// Bench file parsing. The CSV cases follow RFC 4180 §2 (quoted fields with commas, doubled
// quotes and line breaks; CRLF or LF line ends); the rest are our own format rules.
import { describe, expect, it } from 'vitest';
import { parseBenchCsv, parseCsv } from './bench-csv';

const AT = '2026-03-02T08:00:00.000Z';
const parse = (text: string) => parseBenchCsv(text, { defaultTestedAt: AT });

describe('parseCsv (RFC 4180)', () => {
	it.each([
		['a,b\r\n1,2\r\n', [['a', 'b'], ['1', '2']], [1, 2]],
		['a,b\n1,2', [['a', 'b'], ['1', '2']], [1, 2]],
		['a,"x, y"\n"say ""hi""",2\n', [['a', 'x, y'], ['say "hi"', '2']], [1, 2]],
		['a,"two\nlines"\n3,4\n', [['a', 'two\nlines'], ['3', '4']], [1, 3]],
		['\ufeffa\n\n\nb\n', [['a'], ['b']], [1, 4]],
		['a,,c\n', [['a', '', 'c']], [1]]
	])('%j', (text, cells, lines) => {
		const r = parseCsv(text);
		expect(r.error).toBeNull();
		expect(r.records.map((x) => x.cells)).toEqual(cells);
		expect(r.records.map((x) => x.line)).toEqual(lines);
	});
	it('reports an unclosed quote at the line where its record starts', () => {
		expect(parseCsv('a\n"open\nmore').error).toMatchObject({ line: 2 });
	});
	it('reports a stray quote in an unquoted field', () => {
		expect(parseCsv('a\nx"y\n').error).toMatchObject({ line: 2 });
	});
});

describe('parseBenchCsv', () => {
	const good = ['serial,biasV,capacitanceF,q,leakageA', 'P1,1,30e-12,210,2e-9', 'P1,4,18e-12,,', 'P2,1,31e-12,,', 'P2,4,18.5e-12,,1e-9'].join('\n');

	it('groups consecutive rows by serial and keeps part values given on any one row', () => {
		const r = parse(good);
		expect(r.errors).toEqual([]);
		expect(r.rows).toBe(4);
		expect(r.columns).toEqual(['serial', 'biasV', 'capacitanceF', 'q', 'leakageA']);
		expect(r.parts).toEqual([
			{ serial: 'P1', line: 2, testedAt: AT, leakageA: 2e-9, temperatureC: null, points: [{ biasV: 1, capacitanceF: 30e-12, q: 210 }, { biasV: 4, capacitanceF: 18e-12, q: null }] },
			{ serial: 'P2', line: 4, testedAt: AT, leakageA: 1e-9, temperatureC: null, points: [{ biasV: 1, capacitanceF: 31e-12, q: null }, { biasV: 4, capacitanceF: 18.5e-12, q: null }] }
		]);
		expect(r.preview[0]).toEqual({ line: 2, cells: { serial: 'P1', biasV: '1', capacitanceF: '30e-12', q: '210', leakageA: '2e-9' } });
	});

	it('accepts column names in any case and order, and a testedAt with a zone', () => {
		const r = parse('CAPACITANCEF,Serial,testedat,BIASV\n2e-11,A,2026-03-01T10:00:00+01:00,2\n');
		expect(r.errors).toEqual([]);
		expect(r.parts[0]).toMatchObject({ serial: 'A', testedAt: '2026-03-01T09:00:00.000Z', points: [{ biasV: 2, capacitanceF: 2e-11 }] });
	});

	it('reports every bad row with its line and column', () => {
		const text = ['serial,biasV,capacitanceF', 'P1,1,30e-12', 'P1,four,18e-12', 'P1,6,12', ',8,1e-12', 'P2,-1,1e-12', 'P2,2'].join('\n');
		const r = parse(text);
		expect(r.errors).toEqual([
			{ line: 3, column: 'biasV', message: 'biasV “four” is not a number' },
			{ line: 4, column: 'capacitanceF', message: 'capacitanceF is in farads (12 pF is 12e-12); this value is above 1 µF' },
			{ line: 5, column: 'serial', message: 'serial is empty' },
			{ line: 6, column: 'biasV', message: 'biasV is a reverse bias, 0 or more' },
			{ line: 7, column: null, message: '2 fields where the header has 3' }
		]);
	});

	it('refuses a part whose rows are split, a repeated bias, and conflicting part values', () => {
		const r = parse(['serial,biasV,capacitanceF,leakageA', 'A,1,2e-11,1e-9', 'B,1,2e-11,', 'A,2,1e-11,', 'B,1,2e-11,', 'B,2,1e-11,3e-9', 'B,3,1e-11,4e-9'].join('\n'));
		expect(r.errors.map((e) => [e.line, e.column])).toEqual([
			[4, 'serial'],
			[5, 'biasV'],
			[7, 'leakageA']
		]);
	});

	it('refuses unknown, repeated and missing columns, an empty file and a header alone', () => {
		expect(parse('serial,biasV,resonanceHz\n').errors.map((e) => e.message)).toEqual([
			'Unknown column “resonanceHz”; the columns are serial, biasV, capacitanceF, q, leakageA, temperatureC, testedAt',
			'Column capacitanceF is missing'
		]);
		expect(parse('serial,serial,biasV,capacitanceF\n').errors[0]?.message).toBe('Column serial appears twice');
		expect(parse('').errors[0]?.message).toMatch(/empty/);
		expect(parse('serial,biasV,capacitanceF\n').errors[0]?.message).toBe('No data rows after the header');
	});

	it('a testedAt without a zone is refused (the time would depend on the server)', () => {
		expect(parse('serial,biasV,capacitanceF,testedAt\nA,1,2e-11,2026-03-01 10:00\n').errors[0]).toMatchObject({ line: 2, column: 'testedAt' });
	});
});
