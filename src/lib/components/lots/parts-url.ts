// The parts table's state lives in the URL: these build the links of its sort headers, pager and
// filters from the current state, so links, reloads and the back button all show the same page.
import { defaultDir } from '$lib/schemas/lots';

export type PartsState = {
	sort: string;
	dir: 'asc' | 'desc';
	bin: number | null;
	result: 'pass' | 'fail' | null;
	station: string;
	serial: string;
	kind: string;
};


/** Query parameters of a state; defaults are left out so links stay short (sort tested, its default direction, production parts). */
export function partsParams(s: PartsState, page: { after?: string | null; before?: string | null } = {}, keep: Record<string, string | null> = {}): URLSearchParams {
	const p = new URLSearchParams();
	if (s.sort !== 'tested') p.set('sort', s.sort);
	if (s.dir !== defaultDir(s.sort)) p.set('dir', s.dir);
	if (s.bin !== null) p.set('bin', String(s.bin));
	if (s.result) p.set('result', s.result);
	if (s.station) p.set('station', s.station);
	if (s.serial) p.set('serial', s.serial);
	if (s.kind !== 'production') p.set('kind', s.kind);
	if (page.after) p.set('after', page.after);
	if (page.before) p.set('before', page.before);
	for (const [k, v] of Object.entries(keep)) if (v) p.set(k, v);
	return p;
}

function href(path: string, p: URLSearchParams): string {
	const q = p.toString();
	return `${path}${q ? `?${q}` : ''}#parts`;
}

/** The link of a sort header: the same column flips its direction, another starts at its default; paging restarts. */
export function sortHref(path: string, s: PartsState, column: string, keep: Record<string, string | null> = {}): string {
	const dir = s.sort === column ? (s.dir === 'asc' ? 'desc' : 'asc') : defaultDir(column);
	return href(path, partsParams({ ...s, sort: column, dir }, {}, keep));
}

/** A pager link (after/before a cursor), or the first page. */
export function pageHref(path: string, s: PartsState, page: { after?: string | null; before?: string | null }, keep: Record<string, string | null> = {}): string {
	return href(path, partsParams(s, page, keep));
}

/** aria-sort of a header for the current state. */
export function ariaSort(s: PartsState, column: string): 'ascending' | 'descending' | 'none' {
	return s.sort === column ? (s.dir === 'asc' ? 'ascending' : 'descending') : 'none';
}
