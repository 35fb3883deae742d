// Certificate e-mail to a customer contact: the PDF travels in the queue row (bytea), so the
// message carries exactly the certificate that was issued, and goes out through the same sender
// (and the same SMTP server) as alarm e-mail, after the queuing transaction commits.
import { QueryTypes, type Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db';
import { escapeHtml, headerText } from './render';

export const CertificateMailSchema = z.object({
	lotNumber: z.string().min(1).max(100),
	productCode: z.string().min(1).max(100),
	yieldPct: z.number().nullable(),
	contact: z.string().max(120).nullable(),
	note: z.string().max(2000).nullable(),
	sentBy: z.string().min(1).max(200),
	site: z.string().max(200)
});
export type CertificateMail = z.infer<typeof CertificateMailSchema>;

export type Attachment = { filename: string; contentType: string; content: Buffer };

/** Queues the certificate for `to`, due now, inside `transaction`; returns the queue row's id. */
export async function queueCertificateMail(transaction: Transaction, to: string, mail: CertificateMail, attachment: Attachment): Promise<number> {
	const data = CertificateMailSchema.parse(mail);
	const [row] = await db().query<{ id: string }>(
		`INSERT INTO mail_queue (user_id, to_address, kind, payload, due_at, attachment, attachment_name, attachment_type)
		 VALUES (NULL, :to, 'certificate', CAST(:payload AS jsonb), now(), :bytes, :name, :type) RETURNING id`,
		{
			replacements: { to, payload: JSON.stringify(data), bytes: attachment.content, name: attachment.filename, type: attachment.contentType },
			type: QueryTypes.SELECT,
			transaction
		}
	);
	return Number(row?.id);
}

/** Subject, text and HTML of the certificate message (values escaped in the HTML; no CR/LF in the subject). */
export function renderCertificateMail(m: CertificateMail): { subject: string; text: string; html: string } {
	const subject = headerText(`Certificate of conformance · lot ${m.lotNumber} · ${m.productCode}`);
	const greeting = m.contact ? `Dear ${m.contact},` : 'Hello,';
	const yieldText = m.yieldPct === null ? '' : ` (yield ${m.yieldPct.toFixed(2)} %)`;
	const lines = [
		greeting,
		'',
		`attached is the certificate of conformance of lot ${m.lotNumber}, product ${m.productCode}${yieldText}, from ${m.site}.`,
		...(m.note ? ['', m.note] : []),
		'',
		'The release of the lot follows our site’s quality system.',
		'',
		`${m.sentBy}`
	];
	const html = [
		'<!doctype html><html><body style="font-family:Arial,Helvetica,sans-serif;color:#1c1c1c">',
		`<p>${escapeHtml(greeting)}</p>`,
		`<p>attached is the certificate of conformance of lot <b>${escapeHtml(m.lotNumber)}</b>, product ${escapeHtml(m.productCode)}${escapeHtml(yieldText)}, from ${escapeHtml(m.site)}.</p>`,
		...(m.note ? [`<p>${escapeHtml(m.note)}</p>`] : []),
		'<p>The release of the lot follows our site’s quality system.</p>',
		`<p>${escapeHtml(m.sentBy)}</p>`,
		'</body></html>'
	].join('\n');
	return { subject, text: lines.join('\n'), html };
}
