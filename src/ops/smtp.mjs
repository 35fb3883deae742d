// @ts-check
// The local test mail server behind `npm start` and `npm test`: it speaks SMTP (RFC 5321) on
// loopback, accepts every message without authentication, and keeps each one in `dir` as an
// `.eml` file (the RFC 5322 text exactly as received, after the SMTP dot-unstuffing) plus a small
// JSON sidecar (envelope, received time, decoded subject). Nothing is relayed anywhere; admins read
// the messages on /admin/outbox. A real site sets BIASLINE_SMTP_URL and this server never starts.
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { SMTPServer } from 'smtp-server';

/** Largest message kept, in bytes (advertised as the RFC 1870 SIZE limit). */
export const MAX_MESSAGE_BYTES = 5 * 1024 * 1024;

const LOOPBACK = new Set(['127.0.0.1', '::1', '::ffff:127.0.0.1', 'localhost']);

/** @param {string | undefined} address */
function isLoopback(address) {
	return !!address && (LOOPBACK.has(address) || address.startsWith('127.') || address.startsWith('::ffff:127.'));
}

/**
 * Decodes RFC 2047 encoded-words (`=?UTF-8?Q?...?=`, `=?UTF-8?B?...?=`) in an unfolded header
 * value; whitespace between two adjacent encoded-words is dropped (RFC 2047 section 6.2).
 * @param {string} value
 */
export function decodeHeaderWords(value) {
	const joined = value.replace(/(=\?[^?]+\?[bBqQ]\?[^?]*\?=)\s+(?==\?)/g, '$1');
	return joined.replace(/=\?([^?]+)\?([bBqQ])\?([^?]*)\?=/g, (whole, charset, enc, text) => {
		/** @type {BufferEncoding} */
		const cs = /^utf-?8$/i.test(charset) ? 'utf8' : /^(us-ascii|iso-8859-1|latin1)$/i.test(charset) ? 'latin1' : 'utf8';
		try {
			if (enc.toUpperCase() === 'B') return Buffer.from(text, 'base64').toString(cs);
			const bytes = text.replace(/_/g, ' ').replace(/=([0-9A-Fa-f]{2})/g, (/** @type {string} */ _m, /** @type {string} */ h) => String.fromCharCode(parseInt(h, 16)));
			return Buffer.from(bytes, 'latin1').toString(cs);
		} catch {
			return whole;
		}
	});
}

/**
 * The value of one header of an RFC 5322 message (first occurrence, unfolded), or ''.
 * @param {string} message @param {string} name
 */
export function headerValue(message, name) {
	const end = message.search(/\r?\n\r?\n/);
	const head = (end < 0 ? message : message.slice(0, end)).replace(/\r?\n[ \t]+/g, ' ');
	const re = new RegExp(`^${name}:[ \\t]*(.*)$`, 'im');
	return re.exec(head)?.[1]?.trim() ?? '';
}

/**
 * Starts the fake SMTP server; resolves once it listens. `port` 0 lets the kernel choose.
 * @param {{ dir: string, port: number, host?: string }} options
 * @returns {Promise<{ port: number, stop: () => Promise<void> }>}
 */
export async function startFakeSmtp({ dir, port, host = '127.0.0.1' }) {
	if (!isLoopback(host)) throw new Error(`the fake SMTP server only listens on loopback, not ${host}`);
	fs.mkdirSync(dir, { recursive: true });
	const server = new SMTPServer({
		name: 'biasline-outbox.localhost',
		banner: 'Biasline local test mail server (keeps mail, relays nothing)',
		authOptional: true,
		// No TLS and no AUTH on loopback: nothing secret passes, and clients need no certificates.
		disabledCommands: ['AUTH', 'STARTTLS'],
		size: MAX_MESSAGE_BYTES,
		logger: false,
		onConnect(session, callback) {
			if (isLoopback(session.remoteAddress)) return callback();
			const err = Object.assign(new Error('Only loopback clients may use this server'), { responseCode: 554 });
			callback(err);
		},
		onData(stream, session, callback) {
			/** @type {Buffer[]} */
			const chunks = [];
			let bytes = 0;
			stream.on('data', (/** @type {Buffer} */ chunk) => {
				bytes += chunk.length;
				// Past the limit, keep reading (the client must finish DATA) but keep nothing.
				if (bytes <= MAX_MESSAGE_BYTES) chunks.push(chunk);
			});
			stream.on('error', (e) => callback(e));
			stream.on('end', () => {
				if (stream.sizeExceeded || bytes > MAX_MESSAGE_BYTES) {
					// 552: requested mail action aborted, exceeded storage allocation (RFC 5321 4.2.3, RFC 1870).
					const err = Object.assign(new Error(`Message exceeds the fixed maximum size of ${MAX_MESSAGE_BYTES} bytes`), { responseCode: 552 });
					return callback(err);
				}
				try {
					const raw = Buffer.concat(chunks);
					const received = new Date();
					const id = `${received.toISOString().replace(/[-:.]/g, '')}-${randomBytes(4).toString('hex')}`;
					const text = raw.toString('utf8');
					const sidecar = {
						id,
						receivedAt: received.toISOString(),
						from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
						to: session.envelope.rcptTo.map((r) => r.address),
						subject: decodeHeaderWords(headerValue(text, 'subject')),
						bytes: raw.length
					};
					// The .eml first, the sidecar last and by rename: a listed sidecar always has its message.
					fs.writeFileSync(path.join(dir, `${id}.eml`), raw);
					const tmp = path.join(dir, `.${id}.json.tmp`);
					fs.writeFileSync(tmp, JSON.stringify(sidecar, null, '\t'));
					fs.renameSync(tmp, path.join(dir, `${id}.json`));
					callback(null, `Kept as ${id}`);
				} catch (e) {
					callback(e instanceof Error ? e : new Error(String(e)));
				}
			});
		}
	});
	server.on('error', (e) => console.error('[fake-smtp]', e.message));
	await new Promise((resolve, reject) => {
		/** @param {Error} e */
		const onError = (e) => reject(e);
		server.server.once('error', onError);
		server.listen(port, host, () => {
			server.server.off('error', onError);
			resolve(null);
		});
	});
	const addr = server.server.address();
	const actual = typeof addr === 'object' && addr ? addr.port : port;
	return {
		port: actual,
		stop: () => new Promise((resolve) => server.close(() => resolve()))
	};
}
