// The lot endpoints over HTTP: the parts table's keyset paging, sorts and filters; hold and
// release; matched sets; the certificate and its e-mail. Roles: 401 without a session, 403 for a
// role outside the area; bad input is a 400 problem and changes nothing.
import { randomUUID } from 'node:crypto';
import { beforeAll, describe, expect, test } from 'vitest';
import { pdfPages } from '../support/pdf-text';
import { baseUrl, cookieOnce } from './helpers';
import { jsonInit, type TestLine } from './line';
import { lotLine, messageTo, pdfAttachment, postLotParts, type PostedPart } from './lots-support';

let line: TestLine;
let posted: PostedPart[] = [];
const N = 130;
const api = (p: string) => `${baseUrl()}/api/v1/lots/${encodeURIComponent(line.lotNumber)}${p}`;
type PartsAnswer = { rows: { id: number; serial: string; bin: number; pass: boolean; station: string; capacitanceF: (number | null)[] }[]; next: string | null; prev: string | null; total: number; totalCapped: boolean };
const get = async (p: string, who: 'engineer' | 'operator' = 'operator') => fetch(api(p), { headers: { cookie: await cookieOnce(who) } });
const parts = async (q: string) => {
	const res = await get(`/parts${q}`);
	expect(res.status).toBe(200);
	return (await res.json()) as PartsAnswer;
};
const summary = async () => (await (await get('')).json()) as { lot: { disposition: string; dispositionReason: string | null; status: string }; tested: number; passed: number; yieldPct: number };

beforeAll(async () => {
	line = await lotLine('LOTH');
	posted = await postLotParts(line, N);
});

describe('parts table', () => {
	test('walking every page by serial visits each production part once, in order; Previous returns the page before', async () => {
		const seen: string[] = [];
		const pages: PartsAnswer[] = [];
		let q = '?sort=serial';
		for (;;) {
			const page = await parts(q);
			pages.push(page);
			seen.push(...page.rows.map((r) => r.serial));
			if (!page.next) break;
			q = `?sort=serial&after=${page.next}`;
		}
		expect(pages.map((p) => p.rows.length)).toEqual([50, 50, 30]);
		expect(seen).toEqual(posted.map((p) => p.serial).sort());
		expect(pages[0]?.total).toBe(N);
		const second = pages[1];
		const back = await parts(`?sort=serial&before=${second?.prev}`);
		expect(back.rows.map((r) => r.serial)).toEqual(pages[0]?.rows.map((r) => r.serial));
		expect(back.prev).toBeNull();
	});

	test('descending by capacitance at plan point 1 is ordered, and the failing parts (10 % high) lead', async () => {
		const page = await parts('?sort=c1&dir=desc');
		const c = page.rows.map((r) => r.capacitanceF[0] ?? 0);
		expect([...c].sort((a, b) => b - a)).toEqual(c);
		expect(page.rows.slice(0, 13).every((r) => !r.pass)).toBe(true);
	});

	test('filters: failing parts only, with the total from the bin counters; serial prefix; unknown station', async () => {
		const failing = posted.filter((p) => !p.pass);
		const f = await parts('?result=fail');
		expect(f.total).toBe(failing.length);
		expect(f.rows.map((r) => r.serial).sort()).toEqual(failing.map((p) => p.serial).sort());
		const b = await parts('?bin=2');
		expect(b.total).toBe(posted.filter((p) => p.bin === 2).length);
		const prefix = `${line.lotNumber}-001`;
		const s = await parts(`?serial=${encodeURIComponent(prefix)}&sort=serial`);
		expect(s.rows.map((r) => r.serial)).toEqual(posted.map((p) => p.serial).filter((x) => x.startsWith(prefix)).sort());
		expect(s.total).toBe(s.rows.length);
		const st = await parts(`?station=${encodeURIComponent(line.stationName)}&sort=station`);
		expect(st.total).toBe(N);
		const none = await parts('?station=NO-SUCH');
		expect(none.rows).toEqual([]);
	});

	test('roles and bad input: 401 without a session, 400 problem listing every bad field', async () => {
		expect((await fetch(api('/parts'))).status).toBe(401);
		const res = await get('/parts?sort=price&bin=0&after=%%%');
		expect(res.status).toBe(400);
		expect(res.headers.get('content-type')).toContain('application/problem+json');
		const body = (await res.json()) as { errors: { path: string }[] };
		expect(body.errors.map((e) => e.path).sort()).toEqual(['after', 'bin', 'sort']);
	});
});

describe('matched sets', () => {
	test('an operator may read but not build; a bad body is a 400 and builds nothing', async () => {
		expect((await fetch(api('/matched-sets'), jsonInit('', 'POST', { setSize: 2, tolerancePct: 1 }))).status).toBe(401);
		expect((await fetch(api('/matched-sets'), jsonInit(await cookieOnce('operator'), 'POST', { setSize: 2, tolerancePct: 1 }))).status).toBe(403);
		const bad = await fetch(api('/matched-sets'), jsonInit(await cookieOnce('engineer'), 'POST', { setSize: 1, tolerancePct: 80 }));
		expect(bad.status).toBe(400);
		expect(((await bad.json()) as { errors: { path: string }[] }).errors.map((e) => e.path).sort()).toEqual(['setSize', 'tolerancePct']);
		const read = await get('/matched-sets');
		expect(read.status).toBe(200);
		expect(((await read.json()) as { build: unknown }).build).toBeNull();
	});

	test('an engineer builds pairs within ±1 %: every set meets the definition at every plan point, members are good parts', async () => {
		const res = await fetch(api('/matched-sets'), jsonInit(await cookieOnce('engineer'), 'POST', { setSize: 2, tolerancePct: 1 }));
		expect(res.status).toBe(201);
		const good = posted.filter((p) => p.pass);
		const { build } = (await res.json()) as { build: { setCount: number; candidates: number; unmatched: number } };
		expect(build.candidates).toBe(good.length);
		expect(build.setCount * 2 + build.unmatched).toBe(good.length);
		const list = (await (await get('/matched-sets?limit=5000')).json()) as { sets: { members: { serial: string }[]; spreadPct: number }[] };
		expect(list.sets).toHaveLength(build.setCount);
		const bySerial = new Map(good.map((p) => [p.serial, p.capacitanceF]));
		const used = new Set<string>();
		for (const set of list.sets) {
			expect(set.members).toHaveLength(2);
			const vectors = set.members.map((m) => bySerial.get(m.serial) ?? []);
			// Definition (README, matched sets): at every plan point each part within δ of the set's mean.
			for (let j = 0; j < 2; j++) {
				const mean = vectors.reduce((a, v) => a + (v[j] ?? 0), 0) / vectors.length;
				for (const v of vectors) expect(Math.abs((v[j] ?? 0) - mean)).toBeLessThanOrEqual(0.01 * mean);
			}
			for (const m of set.members) {
				expect(used.has(m.serial)).toBe(false);
				used.add(m.serial);
			}
		}
		// With ±2 % spread and ±1 % tolerance most good parts find a partner.
		expect(build.setCount).toBeGreaterThan(good.length / 4);
	});
});

describe('hold, release and the certificate', () => {
	test('roles: 401 and 403 for operators; bad bodies are 400 and change nothing', async () => {
		const body = { disposition: 'held', reason: 'Drift on C at 4 V' };
		expect((await fetch(api('/disposition'), jsonInit('', 'POST', body))).status).toBe(401);
		expect((await fetch(api('/disposition'), jsonInit(await cookieOnce('operator'), 'POST', body))).status).toBe(403);
		expect((await get('/certificate.pdf', 'operator')).status).toBe(403);
		expect((await fetch(api('/certificate/mail'), jsonInit(await cookieOnce('operator'), 'POST', { to: 'a@b.example' }))).status).toBe(403);
		const engineer = await cookieOnce('engineer');
		for (const bad of [{ disposition: 'held' }, { disposition: 'scrapped', reason: 'long enough reason' }, { disposition: 'held', reason: 'x' }]) {
			const res = await fetch(api('/disposition'), jsonInit(engineer, 'POST', bad));
			expect(res.status).toBe(400);
		}
		expect((await fetch(api('/disposition'), { method: 'POST', headers: { cookie: engineer, 'content-type': 'text/plain', origin: baseUrl() }, body: 'held' })).status).toBe(415);
		expect((await summary()).lot.disposition).toBe('pending');
	});

	test('a pending or held lot has no certificate (409); release needs a closed lot', async () => {
		const engineer = await cookieOnce('engineer');
		expect((await get('/certificate.pdf', 'engineer')).status).toBe(409);
		expect((await fetch(api('/certificate/mail'), jsonInit(engineer, 'POST', { to: 'early@customer.example' }))).status).toBe(409);
		const release = await fetch(api('/disposition'), jsonInit(engineer, 'POST', { disposition: 'released', reason: 'All parts in spec' }));
		expect(release.status).toBe(409);
		const hold = await fetch(api('/disposition'), jsonInit(engineer, 'POST', { disposition: 'held', reason: 'Waiting for the correlation study' }));
		expect(hold.status).toBe(200);
		expect((await summary()).lot).toMatchObject({ disposition: 'held', dispositionReason: 'Waiting for the correlation study' });
		expect((await fetch(api('/disposition'), jsonInit(engineer, 'POST', { disposition: 'held', reason: 'Again, twice' }))).status).toBe(409);
		// A held open lot still takes parts (retests): only closing stops the station.
		await line.post([line.part(0)]);
		expect((await get('/certificate.pdf', 'engineer')).status).toBe(409);
	});

	test('after closing and releasing: the PDF names the lot, its yield and the quality-system statement; the e-mail carries it', async () => {
		const engineer = await cookieOnce('engineer');
		expect((await fetch(api(''), jsonInit(await cookieOnce('operator'), 'PATCH', { status: 'closed' }))).status).toBe(200);
		const release = await fetch(api('/disposition'), jsonInit(engineer, 'POST', { disposition: 'released', reason: 'Correlation study passed' }));
		expect(release.status).toBe(200);
		const s = await summary();
		const res = await get('/certificate.pdf', 'engineer');
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toBe('application/pdf');
		const text = (await pdfPages(new Uint8Array(await res.arrayBuffer()))).join(' ');
		expect(text).toContain(line.lotNumber);
		expect(text).toContain(`${s.yieldPct.toFixed(2)} %`);
		expect(text).toContain('quality system');
		expect(text).toContain('Signature');

		expect((await fetch(api('/certificate/mail'), jsonInit(engineer, 'POST', { to: 'not an address' }))).status).toBe(400);
		const to = `quality-${randomUUID().slice(0, 8)}@customer.example`;
		const mail = await fetch(api('/certificate/mail'), jsonInit(engineer, 'POST', { to, contact: 'Incoming QA' }));
		expect(mail.status).toBe(202);
		await expect.poll(() => messageTo(to), { timeout: 30_000, interval: 500 }).not.toBeNull();
		const source = (await messageTo(to)) ?? '';
		const pdf = pdfAttachment(source);
		expect(pdf?.filename).toContain(line.lotNumber);
		const attached = (await pdfPages(new Uint8Array(pdf?.bytes ?? Buffer.alloc(0)))).join(' ');
		expect(attached).toContain(line.lotNumber);
		expect(attached).toContain('quality system');
	});
});
