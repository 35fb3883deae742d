// Alarm e-mail against the real database and a real SMTP conversation with the local test mail
// server (src/ops/smtp.mjs): subscriptions, deduplication, digests, claiming with SKIP LOCKED,
// retries, and the stored message. Reply codes are those of RFC 5321 4.2.2 / 4.3.2.
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { QueryTypes, type Transaction } from 'sequelize';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { db } from '$lib/server/db';
import { findPart, parseMime } from '$lib/server/mail/mime';
import { queueAlarmMail, type AlarmMail } from '$lib/server/mail/notify';
import { listOutbox, readOutboxMessage } from '$lib/server/mail/outbox';
import { claimDueMail, sendDueMail, smtpTransport, type MailTransport, type OutgoingMail } from '$lib/server/mail/sender';
import { listSubscriptions, setDigestMinutes, subscribe, unsubscribe } from '$lib/server/mail/subscriptions';
import { setActive, createUser } from '$lib/server/users';
import { freePort } from '../../src/ops/lib.mjs';
import { MAX_MESSAGE_BYTES, startFakeSmtp } from '../../src/ops/smtp.mjs';
import { uniqueEmail, useDatabase } from './setup-db';

useDatabase();
const system = { userId: null, label: 'test' };
const tag = () => Math.random().toString(36).slice(2, 8);
let alarmSeq = 900_000 + Math.floor(Math.random() * 50_000);

async function newUser(digest: 0 | 5 | 15 | 60 = 0) {
	const r = await createUser(system, { email: uniqueEmail('mail'), name: 'Mail test', role: 'operator', password: 'a good long password' });
	if (!r.ok) throw new Error(r.message);
	if (digest) await setDigestMinutes(r.user.id, digest);
	return r.user;
}

async function newLine(): Promise<number> {
	const rows = await db().query<{ id: string }>('INSERT INTO lines (name) VALUES (:name) RETURNING id', {
		replacements: { name: `Line ${tag()}` },
		type: QueryTypes.SELECT
	});
	return Number(rows[0]?.id);
}

async function newProduct(): Promise<{ id: number; code: string }> {
	const code = `KV-T${tag()}`;
	const rows = await db().query<{ id: string }>('INSERT INTO products (code, name) VALUES (:code, :name) RETURNING id', {
		replacements: { code, name: 'Test varactor' },
		type: QueryTypes.SELECT
	});
	return { id: Number(rows[0]?.id), code };
}

function alarm(lineId: number | null, productId: number, over: Partial<AlarmMail> = {}): AlarmMail {
	alarmSeq += 1;
	return {
		alarmId: alarmSeq,
		rule: 'WE1',
		ruleDescription: 'One point beyond the 3-sigma limits',
		chart: 'C@1V',
		stationName: 'A-02',
		lineId,
		lineName: lineId ? 'Line A' : null,
		productId,
		productCode: 'KV-1405',
		lotNumber: 'L-2026-118',
		suspect: 'product',
		reasoning: 'The reference part did not move.',
		openedAt: '2026-12-01T20:27:00.000Z',
		url: `http://127.0.0.1:3000/alarms/${alarmSeq}`,
		...over
	};
}

type QueueRow = { id: string; kind: string; to_address: string; due_at: Date; sent_at: Date | null; attempts: number; last_error: string | null; payload: { alarms: AlarmMail[] } };

async function queueOf(userId: number): Promise<QueueRow[]> {
	return db().query<QueueRow>('SELECT id, kind, to_address, due_at, sent_at, attempts, last_error, payload FROM mail_queue WHERE user_id = :userId ORDER BY id', {
		replacements: { userId },
		type: QueryTypes.SELECT
	});
}

/** A transport that keeps what it is given (or fails, when told to). */
function recorder(failWith?: string): MailTransport & { sent: OutgoingMail[] } {
	const sent: OutgoingMail[] = [];
	return {
		sent,
		async sendMail(m) {
			if (failWith) throw new Error(failWith);
			sent.push(m);
		},
		close() {}
	};
}

/** Sends everything due at `now` (from any test) to a recorder, so a test starts from an empty due queue. */
async function drain(now: Date) {
	for (let i = 0; i < 100; i++) {
		const r = await sendDueMail(recorder(), { from: 'drain@test.example', now, limit: 100 });
		if (!r.sent.length && !r.failed.length) return;
	}
}

describe('who gets alarm e-mail', () => {
	test('a person following the line gets one row, due now, with the alarm in the payload', async () => {
		const line = await newLine();
		const product = await newProduct();
		const u = await newUser();
		expect(await subscribe(u.id, 'line', line)).toEqual({ ok: true, created: true });
		const now = new Date('2026-12-01T20:30:00Z');
		const a = alarm(line, product.id);
		expect(await queueAlarmMail(a, { now })).toBe(1);
		const rows = await queueOf(u.id);
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({ kind: 'alarm', to_address: u.email, sent_at: null, attempts: 0 });
		expect(rows[0]?.due_at.toISOString()).toBe(now.toISOString());
		expect(rows[0]?.payload.alarms).toEqual([a]);
	});

	test('a person following the product gets it whatever the line', async () => {
		const product = await newProduct();
		const u = await newUser();
		await subscribe(u.id, 'product', product.id);
		expect(await queueAlarmMail(alarm(await newLine(), product.id))).toBe(1);
		expect(await queueAlarmMail(alarm(null, product.id))).toBe(1);
		expect(await queueOf(u.id)).toHaveLength(2);
	});

	test('following both the line and the product still means one message per alarm, and a repeat call queues nothing', async () => {
		const line = await newLine();
		const product = await newProduct();
		const u = await newUser();
		await subscribe(u.id, 'line', line);
		await subscribe(u.id, 'product', product.id);
		const a = alarm(line, product.id);
		expect(await queueAlarmMail(a)).toBe(1);
		expect(await queueAlarmMail(a)).toBe(0);
		expect(await queueOf(u.id)).toHaveLength(1);
	});

	test('nobody else: other lines and products, people who stopped following, deactivated people', async () => {
		const line = await newLine();
		const product = await newProduct();
		const follower = await newUser();
		const other = await newUser();
		const gone = await newUser();
		const left = await newUser();
		await subscribe(follower.id, 'line', line);
		await subscribe(other.id, 'line', await newLine());
		await subscribe(other.id, 'product', (await newProduct()).id);
		await subscribe(gone.id, 'line', line);
		expect(await setActive(system, gone.id, false)).toEqual({ ok: true });
		await subscribe(left.id, 'product', product.id);
		const sub = (await listSubscriptions(left.id))[0];
		expect(sub && (await unsubscribe(left.id, sub.id))).toBe(true);
		expect(await queueAlarmMail(alarm(line, product.id))).toBe(1);
		expect(await queueOf(follower.id)).toHaveLength(1);
		for (const u of [other, gone, left]) expect(await queueOf(u.id)).toHaveLength(0);
	});

	test('a malformed alarm is refused and queues nothing', async () => {
		const product = await newProduct();
		const u = await newUser();
		await subscribe(u.id, 'product', product.id);
		await expect(queueAlarmMail(alarm(null, product.id, { url: 'javascript:alert(1)' }))).rejects.toThrow();
		expect(await queueOf(u.id)).toHaveLength(0);
	});
});

describe('subscriptions', () => {
	test('following twice changes nothing; an unknown target is a field error; one cannot remove another’s', async () => {
		const line = await newLine();
		const u = await newUser();
		const v = await newUser();
		expect(await subscribe(u.id, 'line', line)).toEqual({ ok: true, created: true });
		expect(await subscribe(u.id, 'line', line)).toEqual({ ok: true, created: false });
		expect(await subscribe(u.id, 'product', 987_654_321)).toMatchObject({ ok: false, field: 'product' });
		const subs = await listSubscriptions(u.id);
		expect(subs).toHaveLength(1);
		expect(subs[0]).toMatchObject({ scope: 'line', targetId: line });
		expect(await unsubscribe(v.id, subs[0]?.id ?? 0)).toBe(false);
		expect(await listSubscriptions(u.id)).toHaveLength(1);
	});
});

describe('digests', () => {
	test('a burst within the window is one row due at the window’s end; the next alarm after sending opens a new window', async () => {
		const product = await newProduct();
		const u = await newUser(15);
		await subscribe(u.id, 'product', product.id);
		const t0 = new Date('2030-01-01T10:00:00Z');
		const burst = [alarm(null, product.id, { rule: 'WE1' }), alarm(null, product.id, { rule: 'WE2' }), alarm(null, product.id, { rule: 'N3' })];
		for (const [i, a] of burst.entries()) expect(await queueAlarmMail(a, { now: new Date(t0.getTime() + i * 60_000) })).toBe(1);
		const rows = await queueOf(u.id);
		expect(rows).toHaveLength(1);
		expect(rows[0]?.kind).toBe('digest');
		expect(rows[0]?.due_at.toISOString()).toBe('2030-01-01T10:15:00.000Z');
		expect(rows[0]?.payload.alarms.map((a) => a.alarmId)).toEqual(burst.map((a) => a.alarmId));

		const early = recorder();
		await drain(new Date('2030-01-01T10:14:00Z'));
		await sendDueMail(early, { from: 'x@test.example', now: new Date('2030-01-01T10:14:59Z'), limit: 100 });
		expect(early.sent.filter((m) => m.to === u.email)).toHaveLength(0);

		const due = recorder();
		await sendDueMail(due, { from: 'x@test.example', now: new Date('2030-01-01T10:15:00Z'), limit: 100 });
		const mine = due.sent.filter((m) => m.to === u.email);
		expect(mine).toHaveLength(1);
		expect(mine[0]?.subject).toBe('[Biasline] 3 new alarms');
		for (const a of burst) expect(mine[0]?.text).toContain(`${a.rule} on A-02`);

		const later = alarm(null, product.id);
		await queueAlarmMail(later, { now: new Date('2030-01-01T10:20:00Z') });
		const after = await queueOf(u.id);
		expect(after).toHaveLength(2);
		expect(after[1]?.due_at.toISOString()).toBe('2030-01-01T10:35:00.000Z');
		expect(after[1]?.payload.alarms.map((a) => a.alarmId)).toEqual([later.alarmId]);
	});

	test('a digest the sender holds is not merged into (and does not block): the alarm opens a new digest', async () => {
		const product = await newProduct();
		const u = await newUser(5);
		await subscribe(u.id, 'product', product.id);
		await queueAlarmMail(alarm(null, product.id));
		const [first] = await queueOf(u.id);
		const sender = await db().transaction();
		try {
			await db().query('SELECT id FROM mail_queue WHERE id = :id FOR UPDATE', { replacements: { id: first?.id }, transaction: sender });
			expect(await queueAlarmMail(alarm(null, product.id))).toBe(1);
		} finally {
			await sender.rollback();
		}
		const rows = await queueOf(u.id);
		expect(rows.map((r) => r.payload.alarms.length)).toEqual([1, 1]);
	});

	test('someone without a digest gets one row per alarm', async () => {
		const product = await newProduct();
		const u = await newUser(0);
		await subscribe(u.id, 'product', product.id);
		await queueAlarmMail(alarm(null, product.id));
		await queueAlarmMail(alarm(null, product.id));
		expect((await queueOf(u.id)).map((r) => r.kind)).toEqual(['alarm', 'alarm']);
	});
});

describe('the sender', () => {
	test('mail queued inside an alarm’s transaction is invisible to the sender until that transaction commits', async () => {
		const product = await newProduct();
		const u = await newUser();
		await subscribe(u.id, 'product', product.id);
		const now = new Date('2031-01-01T00:00:00Z');
		await drain(now);
		const t = await db().transaction();
		await queueAlarmMail(alarm(null, product.id), { transaction: t, now });
		const before = recorder();
		await sendDueMail(before, { from: 'x@test.example', now, limit: 100 });
		expect(before.sent.filter((m) => m.to === u.email)).toHaveLength(0);
		await t.commit();
		const after = recorder();
		await sendDueMail(after, { from: 'x@test.example', now, limit: 100 });
		expect(after.sent.filter((m) => m.to === u.email)).toHaveLength(1);
		expect((await queueOf(u.id))[0]?.sent_at).not.toBeNull();
	});

	test('FOR UPDATE SKIP LOCKED: two claimers at once get disjoint rows, and together all of them', async () => {
		const product = await newProduct();
		const people = await Promise.all([newUser(), newUser(), newUser(), newUser()]);
		for (const p of people) await subscribe(p.id, 'product', product.id);
		const now = new Date('2032-01-01T00:00:00Z');
		await drain(now);
		await queueAlarmMail(alarm(null, product.id), { now });
		await queueAlarmMail(alarm(null, product.id), { now });
		const ours = (await Promise.all(people.map((p) => queueOf(p.id)))).flat().map((r) => Number(r.id));
		expect(ours).toHaveLength(8);

		const a: Transaction = await db().transaction();
		const b: Transaction = await db().transaction();
		try {
			const claimedA = await claimDueMail(a, now, 5);
			// b runs while a holds its five rows: SKIP LOCKED hands b the others at once instead of waiting.
			const claimedB = await claimDueMail(b, now, 100);
			const idsA = claimedA.map((r) => r.id);
			const idsB = claimedB.map((r) => r.id);
			expect(idsA).toHaveLength(5);
			expect(idsA.filter((id) => idsB.includes(id))).toEqual([]);
			expect([...idsA, ...idsB].sort((x, y) => x - y)).toEqual([...ours].sort((x, y) => x - y));
		} finally {
			await a.rollback();
			await b.rollback();
		}
	});

	test('a failure counts an attempt, keeps the error and waits 30 s; then the message goes out', async () => {
		const product = await newProduct();
		const u = await newUser();
		await subscribe(u.id, 'product', product.id);
		const now = new Date('2033-01-01T00:00:00Z');
		await drain(now);
		await queueAlarmMail(alarm(null, product.id), { now });
		const r = await sendDueMail(recorder('421 try again later'), { from: 'x@test.example', now });
		expect(r.sent).toEqual([]);
		expect(r.failed).toHaveLength(1);
		const [row] = await queueOf(u.id);
		expect(row).toMatchObject({ attempts: 1, last_error: '421 try again later', sent_at: null });
		expect(row?.due_at.toISOString()).toBe('2033-01-01T00:00:30.000Z');

		const tooSoon = recorder();
		await sendDueMail(tooSoon, { from: 'x@test.example', now: new Date('2033-01-01T00:00:29Z') });
		expect(tooSoon.sent.filter((m) => m.to === u.email)).toHaveLength(0);
		const retry = recorder();
		await sendDueMail(retry, { from: 'x@test.example', now: new Date('2033-01-01T00:00:30Z') });
		expect(retry.sent.filter((m) => m.to === u.email)).toHaveLength(1);
		expect((await queueOf(u.id))[0]).toMatchObject({ attempts: 2, last_error: null });
	});
});

describe('the real SMTP conversation with the local test mail server', () => {
	let dir = '';
	let server: { port: number; stop: () => Promise<void> } | null = null;
	beforeAll(async () => {
		dir = fs.mkdtempSync(path.join(os.tmpdir(), 'biasline-outbox-'));
		server = await startFakeSmtp({ dir, port: Number(await freePort()) });
	});
	afterAll(async () => {
		await server?.stop();
		fs.rmSync(dir, { recursive: true, force: true });
	});

	test('nodemailer → SMTP → .eml: From, To, Subject, both parts, the alarm’s values, HTML escaped', async () => {
		const line = await newLine();
		const product = await newProduct();
		const u = await newUser();
		await subscribe(u.id, 'line', line);
		const now = new Date('2034-01-01T00:00:00Z');
		await drain(now);
		const a = alarm(line, product.id, { stationName: 'A-02 <b>', lotNumber: 'L-77&8' });
		await queueAlarmMail(a, { now });
		const transport = smtpTransport(`smtp://127.0.0.1:${server?.port}`);
		const r = await sendDueMail(transport, { from: 'Biasline <biasline@localhost>', now });
		transport.close();
		expect(r.failed).toEqual([]);
		expect(r.sent).toHaveLength(1);

		const [entry] = await listOutbox(dir);
		expect(entry).toMatchObject({ from: 'biasline@localhost', to: [u.email], subject: '[Biasline] WE1 on A-02 <b> · C@1V · KV-1405' });
		const raw = fs.readFileSync(path.join(dir, `${entry?.id}.eml`), 'utf8');
		const mail = parseMime(raw);
		// RFC 5322 3.6: From, Date and (for us) To and Subject; 3.6.4: a Message-ID.
		expect(mail.headers.from).toBe('Biasline <biasline@localhost>');
		expect(mail.headers.to).toBe(u.email);
		expect(mail.headers.subject).toBe('[Biasline] WE1 on A-02 <b> · C@1V · KV-1405');
		expect(mail.headers.date).toMatch(/\d{1,2} \w{3} \d{4} \d{2}:\d{2}:\d{2} [+-]\d{4}/);
		expect(mail.headers['message-id']).toMatch(/^<[^@\s]+@[^>\s]+>$/);
		expect(mail.headers['auto-submitted']).toBe('auto-generated'); // RFC 3834 5
		// The subject has a non-ASCII "·", so on the wire it must be an RFC 2047 encoded-word.
		expect(raw).toMatch(/^Subject: =\?UTF-8\?[QB]\?/im);
		// RFC 2045 4 and RFC 2046 5.1.4: MIME-Version 1.0, multipart/alternative with text first, HTML last.
		expect(mail.headers['mime-version']).toBe('1.0');
		expect(mail.contentType).toBe('multipart/alternative');
		expect(mail.parts.map((p) => p.contentType)).toEqual(['text/plain', 'text/html']);
		const text = findPart(mail, 'text/plain')?.body ?? '';
		const html = findPart(mail, 'text/html')?.body ?? '';
		for (const v of ['WE1: One point beyond the 3-sigma limits', 'C@1V', 'A-02 <b>', 'Line A', 'KV-1405', 'L-77&8', 'the product', '2026-12-01 20:27 UTC', a.url]) {
			expect(text).toContain(v);
		}
		expect(html).toContain('A-02 &lt;b&gt;');
		expect(html).toContain('L-77&amp;8');
		expect(html).not.toContain('A-02 <b>');
		expect(html).toContain(`href="${a.url}"`);

		const shown = await readOutboxMessage(dir, entry?.id ?? '');
		expect(shown?.text).toBe(text);
		expect(await readOutboxMessage(dir, '../../etc/passwd')).toBeNull();
	});

	type Reply = { code: number; lines: string[] };

	/** A bare SMTP client over node:net: sends lines, and reads replies (multi-line ones end at "NNN "). */
	function rawClient(port: number) {
		const socket = net.connect(port, '127.0.0.1');
		let buffer = '';
		let lines: string[] = [];
		const replies: Reply[] = [];
		const waiting: ((r: Reply) => void)[] = [];
		socket.setEncoding('utf8');
		socket.on('data', (chunk: string) => {
			buffer += chunk;
			let i: number;
			while ((i = buffer.indexOf('\r\n')) >= 0) {
				const line = buffer.slice(0, i);
				buffer = buffer.slice(i + 2);
				lines.push(line);
				// RFC 5321 4.2.1: "NNN-text" continues a reply, "NNN text" (or "NNN") ends it.
				if (/^\d{3}(?: |$)/.test(line)) {
					const reply = { code: Number(line.slice(0, 3)), lines };
					lines = [];
					const w = waiting.shift();
					if (w) w(reply);
					else replies.push(reply);
				}
			}
		});
		return {
			reply: () => new Promise<Reply>((resolve) => {
				const r = replies.shift();
				if (r) resolve(r);
				else waiting.push(resolve);
			}),
			send: (text: string) => socket.write(text),
			closed: () => new Promise<void>((resolve) => socket.once('close', () => resolve())),
			end: () => socket.destroy()
		};
	}

	test('EHLO, MAIL FROM, RCPT TO, DATA, QUIT: 220, 250, 250, 250, 354, 250, 221, and the message kept as sent', async () => {
		const c = rawClient(server?.port ?? 0);
		try {
			expect((await c.reply()).code).toBe(220); // greeting, RFC 5321 4.2.2 / 3.1
			c.send('EHLO client.test\r\n');
			const ehlo = await c.reply();
			expect(ehlo.code).toBe(250);
			// RFC 1870: the fixed size limit is advertised as "SIZE <bytes>".
			expect(ehlo.lines.some((l) => l.slice(4) === `SIZE ${MAX_MESSAGE_BYTES}`)).toBe(true);
			expect(ehlo.lines.some((l) => /STARTTLS|AUTH/.test(l))).toBe(false);
			c.send('MAIL FROM:<station@test.example>\r\n');
			expect((await c.reply()).code).toBe(250);
			c.send('RCPT TO:<noor@test.example>\r\n');
			expect((await c.reply()).code).toBe(250);
			c.send('RCPT TO:<lena@test.example>\r\n');
			expect((await c.reply()).code).toBe(250);
			c.send('DATA\r\n');
			expect((await c.reply()).code).toBe(354); // start mail input, end with <CRLF>.<CRLF>
			const subject = `raw dialogue ${tag()}`;
			// RFC 5321 4.5.2: a line starting with "." is sent with one more "." and received without it.
			c.send(`From: station@test.example\r\nTo: noor@test.example\r\nSubject: ${subject}\r\n\r\nfirst line\r\n..leading dot\r\n.\r\n`);
			const queued = await c.reply();
			expect(queued.code).toBe(250);
			c.send('QUIT\r\n');
			expect((await c.reply()).code).toBe(221); // closing transmission channel
			await c.closed();

			const entry = (await listOutbox(dir)).find((e) => e.subject === subject);
			expect(entry).toMatchObject({ from: 'station@test.example', to: ['noor@test.example', 'lena@test.example'] });
			expect(queued.lines[0]).toContain(entry?.id ?? 'missing');
			const eml = fs.readFileSync(path.join(dir, `${entry?.id}.eml`), 'utf8');
			expect(eml).toBe(`From: station@test.example\r\nTo: noor@test.example\r\nSubject: ${subject}\r\n\r\nfirst line\r\n.leading dot\r\n`);
		} finally {
			c.end();
		}
	});

	test('over 5 MB is refused with 552 (RFC 1870 6.1 / RFC 5321 4.2.3), declared or not, and nothing is kept', async () => {
		const before = (await listOutbox(dir)).length;
		const c = rawClient(server?.port ?? 0);
		try {
			expect((await c.reply()).code).toBe(220);
			c.send('EHLO client.test\r\n');
			expect((await c.reply()).code).toBe(250);
			c.send(`MAIL FROM:<big@test.example> SIZE=${MAX_MESSAGE_BYTES + 1}\r\n`);
			expect((await c.reply()).code).toBe(552);
			c.send('MAIL FROM:<big@test.example>\r\n');
			expect((await c.reply()).code).toBe(250);
			c.send('RCPT TO:<noor@test.example>\r\n');
			expect((await c.reply()).code).toBe(250);
			c.send('DATA\r\n');
			expect((await c.reply()).code).toBe(354);
			const line = `${'x'.repeat(998)}\r\n`; // 998 characters: the RFC 5322 2.1.1 line limit
			c.send(`Subject: too big\r\n\r\n${line.repeat(Math.ceil((MAX_MESSAGE_BYTES + 1000) / line.length))}.\r\n`);
			expect((await c.reply()).code).toBe(552);
			c.send('QUIT\r\n');
			expect((await c.reply()).code).toBe(221);
		} finally {
			c.end();
		}
		expect(await listOutbox(dir)).toHaveLength(before);
	});
});
