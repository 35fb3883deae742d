import { describe, expect, test } from 'vitest';
import { CertificateMailBody, DispositionBody, encodeCursor, MatchedSetsBody, PartsQuery, PartsQueryDoc } from './lots';

describe('PartsQuery (the parts table in the URL)', () => {
	test('defaults: newest first, production parts, no filters', () => {
		expect(PartsQuery.parse({})).toEqual({ sort: 'tested', dir: 'desc', kind: 'production' });
	});
	test('a column starts in its own direction: serial ascending unless told', () => {
		expect(PartsQuery.parse({ sort: 'serial' }).dir).toBe('asc');
		expect(PartsQuery.parse({ sort: 'serial', dir: 'desc' }).dir).toBe('desc');
		expect(PartsQuery.parse({ sort: 'c3' }).sort).toBe('c3');
	});
	test('filters: bin as a number, result, station, serial prefix; empty fields mean no filter', () => {
		expect(PartsQuery.parse({ bin: '2', result: 'fail', station: ' A-01 ', serial: 'LT-26', kind: 'all' })).toMatchObject({ bin: 2, result: 'fail', station: 'A-01', serial: 'LT-26', kind: 'all' });
		expect(PartsQuery.parse({ bin: '', result: '', station: '', serial: '' })).toEqual({ sort: 'tested', dir: 'desc', kind: 'production' });
	});
	test.each([
		[{ sort: 'price' }, 'sort'],
		[{ sort: 'c0' }, 'sort'],
		[{ sort: 'c21' }, 'sort'],
		[{ dir: 'up' }, 'dir'],
		[{ bin: '0' }, 'bin'],
		[{ bin: '1.5' }, 'bin'],
		[{ bin: 'x' }, 'bin'],
		[{ result: 'maybe' }, 'result'],
		[{ serial: "x' OR 1=1" }, 'serial'],
		[{ kind: 'study' }, 'kind'],
		[{ after: 'not base64!' }, 'after'],
		[{ after: encodeCursor({ value: 'a', id: 1 }), before: encodeCursor({ value: 'b', id: 2 }) }, 'before']
	])('%j is refused at %s', (input, path) => {
		const r = PartsQuery.safeParse(input);
		expect(r.success).toBe(false);
		if (!r.success) expect(r.error.issues.map((i) => i.path.join('.'))).toContain(path);
	});
	test('cursors round-trip through the URL (strings with non-ASCII, numbers, null)', () => {
		for (const c of [{ value: 'LT-26-1187-000812 µ', id: 812 }, { value: 2.5e-11, id: 3 }, { value: null, id: 9 }, { value: 7, id: 12 }]) {
			expect(PartsQuery.parse({ after: encodeCursor(c) }).after).toEqual(c);
		}
	});
	test('a cursor of valid base64url but the wrong shape is refused', () => {
		const bad = btoa(JSON.stringify({ a: 1 })).replace(/=+$/, '');
		expect(PartsQuery.safeParse({ after: bad }).success).toBe(false);
		const negative = btoa(JSON.stringify(['x', -1])).replace(/=+$/, '');
		expect(PartsQuery.safeParse({ after: negative }).success).toBe(false);
	});
	test('the OpenAPI description lists the same parameters as the validator', () => {
		expect(Object.keys(PartsQueryDoc.shape).sort()).toEqual(Object.keys(PartsQuery.in.shape).sort());
	});
});

describe('lot decision bodies', () => {
	test('hold or release needs a reason of 5 characters or more', () => {
		expect(DispositionBody.safeParse({ disposition: 'held', reason: 'C drift on A-02' }).success).toBe(true);
		expect(DispositionBody.safeParse({ disposition: 'held', reason: '   ok ' }).success).toBe(false);
		expect(DispositionBody.safeParse({ disposition: 'scrapped', reason: 'long enough' }).success).toBe(false);
	});
	test('matched sets: size 2–16, tolerance in (0, 50] %', () => {
		expect(MatchedSetsBody.parse({ setSize: '4', tolerancePct: '0.5' })).toEqual({ setSize: 4, tolerancePct: 0.5 });
		for (const bad of [{ setSize: 1, tolerancePct: 1 }, { setSize: 17, tolerancePct: 1 }, { setSize: 2, tolerancePct: 0 }, { setSize: 2, tolerancePct: 51 }, { setSize: 2.5, tolerancePct: 1 }]) {
			expect(MatchedSetsBody.safeParse(bad).success).toBe(false);
		}
	});
	test('certificate mail: a valid address; header injection is not an address', () => {
		expect(CertificateMailBody.parse({ to: ' buyer@customer.example ', contact: '', note: '' })).toEqual({ to: 'buyer@customer.example' });
		expect(CertificateMailBody.safeParse({ to: 'buyer@customer.example\r\nBcc: x@y.example' }).success).toBe(false);
		expect(CertificateMailBody.safeParse({ to: 'not an address' }).success).toBe(false);
	});
});
