import { describe, expect, test } from 'vitest';
import { PartsQuery } from '$lib/schemas/lots';
import { ariaSort, pageHref, partsParams, sortHref, type PartsState } from './parts-url';

const base: PartsState = { sort: 'tested', dir: 'desc', bin: null, result: null, station: '', serial: '', kind: 'production' };
const query = (href: string) => Object.fromEntries(new URL(href, 'http://x').searchParams);

describe('parts table links', () => {
	test('the default state is the bare path', () => {
		expect(pageHref('/lots/L1', base, {})).toBe('/lots/L1#parts');
	});
	test('a new column starts at its default direction; the same column flips; paging restarts', () => {
		const s = { ...base, sort: 'serial', dir: 'asc' as const };
		expect(query(sortHref('/lots/L1', base, 'serial'))).toEqual({ sort: 'serial' });
		expect(query(sortHref('/lots/L1', s, 'serial'))).toEqual({ sort: 'serial', dir: 'desc' });
		expect(query(sortHref('/lots/L1', base, 'tested'))).toEqual({ dir: 'asc' });
	});
	test('filters and kept view options travel with every link, cursors only on pager links', () => {
		const s = { ...base, bin: 2, result: 'fail' as const, station: 'A-01', serial: 'LT-9', kind: 'all' };
		expect(query(pageHref('/x', s, { after: 'abc' }, { cv: 'log', cap: null }))).toEqual({ bin: '2', result: 'fail', station: 'A-01', serial: 'LT-9', kind: 'all', after: 'abc', cv: 'log' });
		expect(query(sortHref('/x', s, 'bin', { cv: 'log' }))).not.toHaveProperty('after');
	});
	test('every link parses back to the same state on the server', () => {
		for (const s of [base, { ...base, sort: 'c2', dir: 'desc' as const, bin: 7 }, { ...base, sort: 'station', dir: 'asc' as const, result: 'pass' as const }]) {
			const parsed = PartsQuery.parse(Object.fromEntries(partsParams(s)));
			expect({ sort: parsed.sort, dir: parsed.dir, bin: parsed.bin ?? null, result: parsed.result ?? null, kind: parsed.kind }).toEqual({ sort: s.sort, dir: s.dir, bin: s.bin, result: s.result, kind: s.kind });
		}
	});
	test('aria-sort names the sorted column only', () => {
		expect(ariaSort(base, 'tested')).toBe('descending');
		expect(ariaSort(base, 'serial')).toBe('none');
	});
});
