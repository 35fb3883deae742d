import { describe, expect, test } from 'vitest';
import { decodeQuotedPrintable, decodeWords, findPart, parseMime } from './mime';

describe('RFC 2047 encoded-words', () => {
	test.each([
		// Q encoding: "_" is a space, =XX a byte (RFC 2047 4.2); UTF-8 "·" is C2 B7.
		['=?UTF-8?Q?WE1_on_A-02_=C2=B7_C@1V?=', 'WE1 on A-02 · C@1V'],
		// B encoding is base64 (RFC 2047 4.1).
		['=?UTF-8?B?wrc=?=', '·'],
		// Whitespace between adjacent encoded-words is not shown (RFC 2047 6.2).
		['=?UTF-8?Q?a?= =?UTF-8?Q?b?=', 'ab'],
		['plain text', 'plain text']
	])('%s', (input, expected) => expect(decodeWords(input)).toBe(expected));
});

describe('quoted-printable (RFC 2045 6.7)', () => {
	test('soft line breaks join, =XX becomes the byte', () => {
		expect(decodeQuotedPrintable('Caf=C3=A9 au =\r\nlait =3D 1')).toBe('Café au lait = 1');
	});
});

describe('multipart (RFC 2046 5.1.1)', () => {
	const raw = [
		'Subject: x',
		'Content-Type: multipart/alternative;',
		' boundary="--b1"',
		'',
		'preamble',
		'----b1',
		'Content-Type: text/plain; charset=utf-8',
		'Content-Transfer-Encoding: quoted-printable',
		'',
		'hello =C2=B7 world',
		'----b1',
		'Content-Type: text/html; charset=utf-8',
		'Content-Transfer-Encoding: base64',
		'',
		Buffer.from('<p>hi</p>').toString('base64'),
		'----b1--',
		'epilogue'
	].join('\r\n');

	test('both parts are found and decoded; preamble and epilogue are dropped', () => {
		const m = parseMime(raw);
		expect(m.contentType).toBe('multipart/alternative');
		expect(m.parts.map((p) => p.contentType)).toEqual(['text/plain', 'text/html']);
		expect(findPart(m, 'text/plain')?.body).toBe('hello · world');
		expect(findPart(m, 'text/html')?.body).toBe('<p>hi</p>');
	});
});
