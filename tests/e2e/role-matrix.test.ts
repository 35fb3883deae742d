// The role matrix: every route file under src/routes (pages: GET; endpoints: each exported method)
// × every principal (admin, engineer, operator, a station token, no session), checked against the
// table "Route by route" in the README. A route file the table lacks, or a row without a route
// file, fails the test: the README stays the documented truth.
//
// What a request is: GET for pages, the method for endpoints, with `{}` as JSON body for writes (so
// an allowed write is refused as invalid and changes nothing). Path parameters name things that do
// not exist, so an allowed request ends in 404 at worst and no demo data is touched; the guard runs
// before any lookup (DEVELOPERS.md, Conventions). Cells: ✓ allowed (any answer but 401, 403, a
// redirect to the sign-in page, or a 5xx), 401, 403, `login` (a redirect to /login).
import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieFor, type Who } from './helpers';
import { setUpLine } from './line';
import { pF } from './physics';

const ROOT = path.resolve(import.meta.dirname, '..', '..');
const PRINCIPALS = ['admin', 'engineer', 'operator', 'station', 'none'] as const;
type Principal = (typeof PRINCIPALS)[number];
const CELLS = ['✓', '401', '403', 'login'] as const;
type Cell = (typeof CELLS)[number];
type Row = { route: string; method: string; cells: Record<Principal, Cell> };

/** Route ids (groups removed) with their methods, from the files under src/routes. */
export function routeFiles(): { route: string; method: string }[] {
	const out: { route: string; method: string }[] = [];
	const walk = (dir: string) => {
		for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
			const full = path.join(dir, e.name);
			if (e.isDirectory()) {
				walk(full);
				continue;
			}
			const rel = path.relative(path.join(ROOT, 'src', 'routes'), dir).split(path.sep);
			const route = '/' + rel.filter((s) => s && !/^\(.*\)$/.test(s)).join('/');
			if (e.name === '+page.svelte' || (e.name === '+page.server.ts' && !fs.existsSync(path.join(dir, '+page.svelte')))) out.push({ route, method: 'GET' });
			if (e.name === '+server.ts') {
				const text = fs.readFileSync(full, 'utf8');
				for (const m of text.matchAll(/export\s+(?:const|async\s+function|function)\s+(GET|POST|PUT|PATCH|DELETE)\b/g)) out.push({ route, method: m[1] ?? '' });
			}
		}
	};
	walk(path.join(ROOT, 'src', 'routes'));
	return out.sort((a, b) => a.route.localeCompare(b.route) || a.method.localeCompare(b.method));
}

/** The rows of the README's "Route by route" table. */
export function readmeMatrix(): Row[] {
	const text = fs.readFileSync(path.join(ROOT, 'README.md'), 'utf8');
	const start = text.indexOf('### Route by route');
	if (start < 0) throw new Error('README.md has no "### Route by route" section');
	const section = text.slice(start).split(/\n#{2,3} /)[0] ?? '';
	const rows: Row[] = [];
	for (const line of section.split('\n')) {
		const m = /^\|\s*`([^`]+)`\s*\|\s*(\w+)\s*\|(.*)\|\s*$/.exec(line);
		if (!m) continue;
		const values = (m[3] ?? '').split('|').map((c) => c.trim());
		if (values.length !== PRINCIPALS.length) throw new Error(`README row ${m[1]} ${m[2]}: ${values.length} cells, want ${PRINCIPALS.length}`);
		const cells = {} as Record<Principal, Cell>;
		PRINCIPALS.forEach((p, i) => {
			const v = values[i] ?? '';
			if (!(CELLS as readonly string[]).includes(v)) throw new Error(`README row ${m[1]} ${m[2]}: cell "${v}" for ${p} is not one of ${CELLS.join(' ')}`);
			cells[p] = v as Cell;
		});
		rows.push({ route: m[1] ?? '', method: m[2] ?? '', cells });
	}
	return rows;
}

const PARAMS: Record<string, string> = {
	number: 'LT-NOSUCH-0001',
	code: 'NOSUCH-0001',
	name: 'NOSUCH-S1',
	id: '999999999'
};
function concrete(route: string): string {
	return route.replace(/\[(\w+)(?:=\w+)?\]/g, (_, name: string) => {
		const v = PARAMS[name];
		if (!v) throw new Error(`no test value for the route parameter [${name}] of ${route}: add one to PARAMS`);
		return v;
	});
}

let auth: Record<Principal, Record<string, string>>;

beforeAll(async () => {
	// Sessions of this file's own (the matrix ends with DELETE /api/v1/session, which signs out).
	const who: Who[] = ['admin', 'engineer', 'operator'];
	const cookies = await Promise.all(who.map((w) => cookieFor(w)));
	const line = await setUpLine({ prefix: 'RM', biases: [1, 4], plan: { points: [{ biasV: 1, minF: 20 * pF, maxF: 35 * pF }, { biasV: 4 }] } });
	auth = {
		admin: { cookie: cookies[0] ?? '' },
		engineer: { cookie: cookies[1] ?? '' },
		operator: { cookie: cookies[2] ?? '' },
		station: { authorization: `Bearer ${line.token}` },
		none: {}
	};
});

async function answer(row: { route: string; method: string }, p: Principal): Promise<{ status: number; location: string }> {
	const write = !['GET', 'DELETE'].includes(row.method);
	const res = await fetch(`${baseUrl()}${concrete(row.route)}`, {
		method: row.method,
		redirect: 'manual',
		headers: { ...auth[p], ...(write ? { 'content-type': 'application/json', origin: baseUrl() } : {}) },
		...(write ? { body: '{}' } : {}),
		signal: AbortSignal.timeout(20_000)
	});
	// Streams and files: the status and headers are the answer; do not wait for the body.
	await res.body?.cancel().catch(() => {});
	return { status: res.status, location: res.headers.get('location') ?? '' };
}

function verdict(a: { status: number; location: string }): Cell | `5xx ${number}` | 'other' {
	if (a.status >= 500) return `5xx ${a.status}`;
	if (a.status === 401) return '401';
	if (a.status === 403) return '403';
	if (a.status >= 300 && a.status < 400 && /^(https?:\/\/[^/]+)?\/login\b/.test(a.location)) return 'login';
	return '✓';
}

describe('role matrix', () => {
	test('the README table has one row per route file and method, and no other', () => {
		const files = routeFiles().map((r) => `${r.route} ${r.method}`);
		const rows = readmeMatrix().map((r) => `${r.route} ${r.method}`);
		expect(files.length).toBeGreaterThan(40);
		expect(files.filter((f) => !rows.includes(f)), 'route files missing from the README table "Route by route"').toEqual([]);
		expect(rows.filter((r) => !files.includes(r)), 'README rows without a route file').toEqual([]);
		expect(new Set(rows).size).toBe(rows.length);
	});

	test('every route answers every principal as the README says', async () => {
		const rows = readmeMatrix();
		const files = new Set(routeFiles().map((r) => `${r.route} ${r.method}`));
		// Signing out last, so the other rows still see the sessions.
		const ordered = [...rows.filter((r) => !(r.route === '/api/v1/session' && r.method === 'DELETE')), ...rows.filter((r) => r.route === '/api/v1/session' && r.method === 'DELETE')];
		const wrong: string[] = [];
		for (const row of ordered) {
			if (!files.has(`${row.route} ${row.method}`)) continue; // reported by the test above
			for (const p of PRINCIPALS) {
				const a = await answer(row, p);
				const got = verdict(a);
				if (got !== row.cells[p]) wrong.push(`${row.method} ${row.route} as ${p}: README says ${row.cells[p]}, got ${got} (${a.status}${a.location ? ` → ${a.location}` : ''})`);
			}
		}
		expect(wrong).toEqual([]);
	});
});
