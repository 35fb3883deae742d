// The background sender: every few seconds it takes the due rows of the mail queue, sends each
// over SMTP and marks it sent. Rows are claimed with FOR UPDATE SKIP LOCKED inside one
// transaction, so several app instances never send the same row, and a row another transaction
// still holds (an alarm not yet committed, a digest being merged) waits for the next round.
// Delivery is at least once: a crash after the SMTP server accepted a message but before the
// commit sends it again on the next round.
import nodemailer from 'nodemailer';
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db';
import { settings } from '../env';
import { CertificateMailSchema, renderCertificateMail } from './certificate';
import { MAX_ATTEMPTS } from './notify';
import { renderAlarmMail } from './render';
import { MailPayloadSchema } from './types';

export type OutgoingMail = {
	from: string;
	to: string;
	subject: string;
	text: string;
	html: string;
	headers: Record<string, string>;
	attachments?: { filename: string; content: Buffer; contentType: string }[];
};
export type MailTransport = { sendMail(message: OutgoingMail): Promise<unknown>; close(): void };

export type ClaimedRow = {
	id: number;
	toAddress: string;
	kind: 'alarm' | 'digest' | 'certificate';
	payload: unknown;
	attempts: number;
	attachment: { filename: string; content: Buffer; contentType: string } | null;
};

/** Milliseconds to wait before the next try after `attempts` failures: 30 s doubling, at most 1 h. */
export function retryDelayMs(attempts: number): number {
	return Math.min(30_000 * 2 ** Math.max(0, attempts - 1), 3_600_000);
}

/** A nodemailer SMTP transport for `url` (smtp:// or smtps://), with timeouts so a dead server cannot hold the queue. */
export function smtpTransport(url: string): MailTransport {
	const t = nodemailer.createTransport({ url, connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 20_000 });
	return { sendMail: (m) => t.sendMail(m), close: () => t.close() };
}

/** Locks and returns up to `limit` due, unsent rows that no other transaction holds. */
export async function claimDueMail(transaction: Transaction, now: Date, limit: number): Promise<ClaimedRow[]> {
	const rows = await db().query<{
		id: string;
		to_address: string;
		kind: ClaimedRow['kind'];
		payload: unknown;
		attempts: number;
		attachment: Buffer | null;
		attachment_name: string | null;
		attachment_type: string | null;
	}>(
		`SELECT id, to_address, kind, payload, attempts, attachment, attachment_name, attachment_type FROM mail_queue
		 WHERE sent_at IS NULL AND due_at <= :now AND attempts < :max
		 ORDER BY due_at, id LIMIT :limit
		 FOR UPDATE SKIP LOCKED`,
		{ replacements: { now, max: MAX_ATTEMPTS, limit }, type: QueryTypes.SELECT, transaction }
	);
	return rows.map((r) => ({
		id: Number(r.id),
		toAddress: r.to_address,
		kind: r.kind,
		payload: r.payload,
		attempts: r.attempts,
		attachment: r.attachment ? { filename: r.attachment_name ?? 'attachment.bin', content: r.attachment, contentType: r.attachment_type ?? 'application/octet-stream' } : null
	}));
}

/** What a claimed row sends: the rendered message, or why its payload cannot be sent. */
function composeRow(row: ClaimedRow, from: string): { ok: true; mail: OutgoingMail } | { ok: false; error: string } {
	if (row.kind === 'certificate') {
		const parsed = CertificateMailSchema.safeParse(row.payload);
		if (!parsed.success) return { ok: false, error: parsed.error.message };
		if (!row.attachment) return { ok: false, error: 'certificate row without its attachment' };
		const { subject, text, html } = renderCertificateMail(parsed.data);
		return {
			ok: true,
			mail: { from, to: row.toAddress, subject, text, html, headers: { 'X-Biasline-Lot': parsed.data.lotNumber }, attachments: [row.attachment] }
		};
	}
	const parsed = MailPayloadSchema.safeParse(row.payload);
	if (!parsed.success) return { ok: false, error: parsed.error.message };
	const { subject, text, html } = renderAlarmMail(parsed.data.alarms);
	return {
		ok: true,
		mail: {
			from,
			to: row.toAddress,
			subject,
			text,
			html,
			// RFC 3834: an automatic message, so auto-responders stay quiet.
			headers: { 'Auto-Submitted': 'auto-generated', 'X-Biasline-Alarms': parsed.data.alarms.map((a) => a.alarmId).join(' ') }
		}
	};
}

export type SendRound = { sent: number[]; failed: number[] };

/**
 * One round of the sender: claims due rows, renders and sends them, and records the outcome.
 * A failure counts an attempt, keeps the error and pushes the row back by `retryDelayMs`; the
 * rest of the round waits for the next one (the server is likely down for them too).
 */
export async function sendDueMail(transport: MailTransport, options: { from: string; now?: Date; limit?: number }): Promise<SendRound> {
	const now = options.now ?? new Date();
	const result: SendRound = { sent: [], failed: [] };
	await db().transaction(async (transaction) => {
		const rows = await claimDueMail(transaction, now, options.limit ?? 10);
		for (const row of rows) {
			const composed = composeRow(row, options.from);
			if (!composed.ok) {
				// Not worth retrying: the payload will not get better. Give up at once, keep the reason.
				await db().query('UPDATE mail_queue SET attempts = :max, last_error = :err WHERE id = :id', {
					replacements: { id: row.id, max: MAX_ATTEMPTS, err: `unreadable payload: ${composed.error}`.slice(0, 1000) },
					transaction
				});
				result.failed.push(row.id);
				continue;
			}
			try {
				await transport.sendMail(composed.mail);
				await db().query('UPDATE mail_queue SET sent_at = now(), attempts = attempts + 1, last_error = NULL WHERE id = :id', {
					replacements: { id: row.id },
					transaction
				});
				result.sent.push(row.id);
			} catch (e) {
				const message = e instanceof Error ? e.message : String(e);
				await db().query('UPDATE mail_queue SET attempts = attempts + 1, last_error = :err, due_at = :due WHERE id = :id', {
					replacements: { id: row.id, err: message.slice(0, 1000), due: new Date(now.getTime() + retryDelayMs(row.attempts + 1)) },
					transaction
				});
				result.failed.push(row.id);
				break;
			}
		}
	});
	return result;
}

export type SenderLoop = { stop(): Promise<void> };

/** Runs `sendDueMail` every `intervalMs` until stopped; a failed round is logged and the loop goes on. */
export function startSenderLoop(transport: MailTransport, options: { from: string; intervalMs: number }): SenderLoop {
	let timer: ReturnType<typeof setTimeout> | null = null;
	let stopped = false;
	let current: Promise<void> = Promise.resolve();
	const tick = () => {
		current = sendDueMail(transport, { from: options.from })
			.then((r) => {
				if (r.failed.length) console.warn(`[biasline] mail: ${r.failed.length} message(s) failed, will retry`);
			})
			.catch((e: unknown) => console.error('[biasline] mail sender round failed:', e instanceof Error ? e.message : e))
			.finally(() => {
				if (!stopped) timer = setTimeout(tick, options.intervalMs);
			});
	};
	timer = setTimeout(tick, options.intervalMs);
	return {
		async stop() {
			stopped = true;
			if (timer) clearTimeout(timer);
			await current;
			transport.close();
		}
	};
}

// The one sender of this process (started from hooks.server.ts init).
let handle: SenderLoop | null = null;

/**
 * Starts the background sender unless it runs already; without BIASLINE_SMTP_URL it says so once
 * and sends nothing (alarms are still queued, and go out once a mail server is configured).
 * Stops on adapter-node's `sveltekit:shutdown`.
 */
export function startMailSender(intervalMs = 3000): void {
	if (handle) return;
	const s = settings();
	if (!s.BIASLINE_SMTP_URL) {
		console.log('[biasline] BIASLINE_SMTP_URL is not set: alarm e-mail is queued but not sent');
		return;
	}
	const loop = startSenderLoop(smtpTransport(s.BIASLINE_SMTP_URL), { from: s.BIASLINE_MAIL_FROM, intervalMs });
	handle = loop;
	process.once('sveltekit:shutdown', () => {
		handle = null;
		void loop.stop();
	});
}
