import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, test } from 'vitest';
import { baseUrl, cookieFor, PEOPLE, type Who } from './helpers';

// The documented role matrix (README, "Who may do what"), checked on the server over HTTP:
// 200 where the role may use the page, 403 where it may not.
const PAGES: [string, Who[]][] = [
	['/floor', ['admin', 'engineer', 'operator']],
	['/lots', ['admin', 'engineer', 'operator']],
	['/stations', ['admin', 'engineer', 'operator']],
	['/alarms', ['admin', 'engineer', 'operator']],
	['/account', ['admin', 'engineer', 'operator']],
	['/charts', ['admin', 'engineer']],
	['/products', ['admin', 'engineer']],
	['/studies', ['admin', 'engineer']],
	['/audit', ['admin', 'engineer']],
	['/admin', ['admin']]
];

const cookies: Partial<Record<Who, string>> = {};
beforeAll(async () => {
	for (const who of Object.keys(PEOPLE) as Who[]) cookies[who] = await cookieFor(who);
});

describe('role matrix on the server', () => {
	test.each(PAGES)('%s', async (page, allowed) => {
		for (const who of Object.keys(PEOPLE) as Who[]) {
			const res = await fetch(baseUrl() + page, { headers: { cookie: cookies[who] ?? '' }, redirect: 'manual' });
			expect({ who, status: res.status }).toEqual({ who, status: allowed.includes(who) ? 200 : 403 });
		}
	});

	test.each(PAGES.map(([p]) => p))('signed out, %s redirects to the sign-in page', async (page) => {
		const res = await fetch(baseUrl() + page, { redirect: 'manual' });
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`/login?next=${encodeURIComponent(page)}`);
	});

	test('signed out, / redirects to /login', async () => {
		const res = await fetch(baseUrl() + '/', { redirect: 'manual' });
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe('/login');
	});

	test('an operator posting the admin form action is refused on the server', async () => {
		const body = new URLSearchParams({ name: 'Sneaky', email: 'sneaky@corvane.example', role: 'admin', password: 'a long password here' });
		const res = await fetch(`${baseUrl()}/admin?/create`, {
			method: 'POST',
			headers: { cookie: cookies.operator ?? '', origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded', accept: 'application/json' },
			body
		});
		expect(res.status).toBe(403);
		const admin = await fetch(`${baseUrl()}/admin`, { headers: { cookie: cookies.admin ?? '' } });
		expect(await admin.text()).not.toContain('sneaky@corvane.example');
	});
});

describe('people API', () => {
	const body = (email: string) => JSON.stringify({ email, name: 'Ivo Marek', role: 'operator', password: 'a-long-passphrase' });

	test('POST /api/v1/users: 401 without a session, 403 for operator and engineer, 201 for admin', async () => {
		const email = `ivo.${Date.now()}@corvane.example`;
		const post = (cookie?: string) =>
			fetch(`${baseUrl()}/api/v1/users`, { method: 'POST', headers: { 'content-type': 'application/json', ...(cookie ? { cookie } : {}) }, body: body(email) });
		const none = await post();
		expect(none.status).toBe(401);
		expect(none.headers.get('content-type')).toContain('application/problem+json');
		expect((await post(cookies.operator)).status).toBe(403);
		expect((await post(cookies.engineer)).status).toBe(403);
		const created = await post(cookies.admin);
		expect(created.status).toBe(201);
		expect(await created.json()).toMatchObject({ email, role: 'operator' });
		const again = await post(cookies.admin);
		expect(again.status).toBe(409);
	});

	test('an invalid body is a 400 problem naming every bad field', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/users`, {
			method: 'POST',
			headers: { 'content-type': 'application/json', cookie: cookies.admin ?? '' },
			body: JSON.stringify({ email: 'not-an-email', name: '', role: 'superuser', password: 'short' })
		});
		expect(res.status).toBe(400);
		const p = (await res.json()) as { errors: { path: string }[] };
		expect(p.errors.map((e) => e.path).sort()).toEqual(['email', 'name', 'password', 'role']);
	});

	test('a body that is not JSON is a 400 problem, not a 500', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"email": ' });
		expect(res.status).toBe(400);
		expect(res.headers.get('content-type')).toContain('application/problem+json');
	});

	test('a wrong password is 401 from the API, the same for an unknown e-mail', async () => {
		const post = (email: string) =>
			fetch(`${baseUrl()}/api/v1/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, password: 'wrong-password' }) });
		const wrong = await post(PEOPLE.engineer.email);
		const unknown = await post('nobody@corvane.example');
		expect(wrong.status).toBe(401);
		expect(unknown.status).toBe(401);
		expect((await wrong.json()).detail).toBe((await unknown.json()).detail);
	});

	test('DELETE /api/v1/session signs out: the cookie no longer opens pages', async () => {
		const cookie = await cookieFor('engineer');
		const del = await fetch(`${baseUrl()}/api/v1/session`, { method: 'DELETE', headers: { cookie } });
		expect(del.status).toBe(204);
		const res = await fetch(`${baseUrl()}/floor`, { headers: { cookie }, redirect: 'manual' });
		expect(res.status).toBe(303);
	});

	test('an unknown API path is a 404 problem document', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/nothing-here`);
		expect(res.status).toBe(404);
		expect(res.headers.get('content-type')).toContain('application/problem+json');
	});
});

describe('OpenAPI document', () => {
	test('is OpenAPI 3.1 and describes the people endpoints from the zod schemas', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/openapi.json`);
		expect(res.status).toBe(200);
		const doc = (await res.json()) as { openapi: string; paths: Record<string, Record<string, unknown>> };
		expect(doc.openapi).toBe('3.1.0');
		expect(Object.keys(doc.paths)).toEqual(expect.arrayContaining(['/api/v1/session', '/api/v1/users']));
		const users = doc.paths['/api/v1/users']?.post as { requestBody: { content: Record<string, { schema: { required?: string[] } }> } };
		expect(users.requestBody.content['application/json']?.schema.required?.sort()).toEqual(['email', 'name', 'password', 'role']);
	});

	test('every endpoint under src/routes/api is in the document, with every method it exports', async () => {
		const doc = (await (await fetch(`${baseUrl()}/api/v1/openapi.json`)).json()) as { paths: Record<string, Record<string, unknown>> };
		const dir = path.join(process.cwd(), 'src', 'routes');
		const files = fs.readdirSync(path.join(dir, 'api'), { recursive: true }).map(String).filter((f) => f.endsWith('+server.ts'));
		expect(files.length).toBeGreaterThan(10);
		for (const f of files) {
			const route = '/api/' + path.dirname(f).replace(/\[(\w+)(=\w+)?\]/g, '{$1}');
			const source = fs.readFileSync(path.join(dir, 'api', f), 'utf8');
			const methods = [...source.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => (m[1] ?? '').toLowerCase());
			for (const m of methods) expect({ route, method: m, documented: Boolean(doc.paths[route]?.[m]) }).toEqual({ route, method: m, documented: true });
		}
	});
});

