// Just enough MIME to read back what the sender wrote: headers (RFC 5322 2.2, unfolded),
// multipart bodies split on their boundary (RFC 2046 5.1.1) and the quoted-printable and base64
// transfer encodings (RFC 2045 6.7 and 6.8). Used by the outbox page and the tests; it is not a
// general mail parser (no nested charsets other than UTF-8 and Latin-1, no attachments).
export type MimePart = { headers: Record<string, string>; contentType: string; body: string; parts: MimePart[] };

/** Decodes RFC 2047 encoded-words in a header value (UTF-8 and Latin-1, Q and B encodings). */
export function decodeWords(value: string): string {
	const joined = value.replace(/(=\?[^?]+\?[bBqQ]\?[^?]*\?=)\s+(?==\?)/g, '$1');
	return joined.replace(/=\?([^?]+)\?([bBqQ])\?([^?]*)\?=/g, (_whole, charset: string, enc: string, text: string) => {
		const cs: BufferEncoding = /^(us-ascii|iso-8859-1|latin1)$/i.test(charset) ? 'latin1' : 'utf8';
		if (enc.toUpperCase() === 'B') return Buffer.from(text, 'base64').toString(cs);
		const bytes = text.replace(/_/g, ' ').replace(/=([0-9A-Fa-f]{2})/g, (_m, h: string) => String.fromCharCode(parseInt(h, 16)));
		return Buffer.from(bytes, 'latin1').toString(cs);
	});
}

/** RFC 2045 6.7: soft line breaks (`=` at the end of a line) go, `=XX` becomes the byte XX. */
export function decodeQuotedPrintable(text: string, charset: BufferEncoding = 'utf8'): string {
	const bytes = text.replace(/=\r?\n/g, '').replace(/=([0-9A-Fa-f]{2})/g, (_m, h: string) => String.fromCharCode(parseInt(h, 16)));
	return Buffer.from(bytes, 'latin1').toString(charset);
}

function splitHead(raw: string): { head: string; body: string } {
	const m = /\r?\n\r?\n/.exec(raw);
	return m ? { head: raw.slice(0, m.index), body: raw.slice(m.index + m[0].length) } : { head: raw, body: '' };
}

/** Header names in lower case; the first occurrence wins; values unfolded and decoded. */
export function parseHeaders(head: string): Record<string, string> {
	const out: Record<string, string> = {};
	for (const line of head.replace(/\r?\n[ \t]+/g, ' ').split(/\r?\n/)) {
		const i = line.indexOf(':');
		if (i <= 0) continue;
		const name = line.slice(0, i).trim().toLowerCase();
		out[name] ??= decodeWords(line.slice(i + 1).trim());
	}
	return out;
}

function param(header: string, name: string): string | null {
	const m = new RegExp(`;\\s*${name}\\s*=\\s*(?:"([^"]*)"|([^;\\s]+))`, 'i').exec(header);
	return m ? (m[1] ?? m[2] ?? null) : null;
}

/** Parses a message or body part; multipart bodies become `parts`, leaf bodies are decoded to text. */
export function parseMime(raw: string): MimePart {
	const { head, body } = splitHead(raw);
	const headers = parseHeaders(head);
	const typeHeader = headers['content-type'] ?? 'text/plain';
	const contentType = (typeHeader.split(';')[0] ?? 'text/plain').trim().toLowerCase();
	const boundary = contentType.startsWith('multipart/') ? param(typeHeader, 'boundary') : null;
	if (boundary) {
		const delimiter = `--${boundary}`;
		const pieces = body.split(new RegExp(`\\r?\\n?${delimiter.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}`));
		// pieces[0] is the preamble; the last piece starts with "--" (the close delimiter) and is the epilogue.
		const parts = pieces
			.slice(1)
			.filter((p) => !p.startsWith('--'))
			.map((p) => parseMime(p.replace(/^[ \t]*\r?\n/, '')));
		return { headers, contentType, body: '', parts };
	}
	const charset: BufferEncoding = /^(us-ascii|iso-8859-1|latin1)$/i.test(param(typeHeader, 'charset') ?? '') ? 'latin1' : 'utf8';
	const encoding = (headers['content-transfer-encoding'] ?? '7bit').toLowerCase();
	const decoded =
		encoding === 'quoted-printable'
			? decodeQuotedPrintable(body, charset)
			: encoding === 'base64'
				? Buffer.from(body.replace(/\s+/g, ''), 'base64').toString(charset)
				: body;
	return { headers, contentType, body: decoded, parts: [] };
}

/** The first leaf part of the given type, searching depth first. */
export function findPart(part: MimePart, type: string): MimePart | null {
	if (!part.parts.length) return part.contentType === type ? part : null;
	for (const p of part.parts) {
		const hit = findPart(p, type);
		if (hit) return hit;
	}
	return null;
}
