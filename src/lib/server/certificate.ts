// The certificate of conformance of a lot, as PDF: summary, bins, the spec plan and its version,
// capability per characteristic, the matched sets, the statement that release follows the site's
// quality system, and a signature line. Only a released lot has one (see lotCertificate).
import { createHash } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { audit } from './audit';
import type { SessionUser } from './auth';
import { ROLE_LABELS } from '$lib/auth/roles';
import { db } from './db';
import { binNames, lotCharacteristics, type Characteristic } from './lot-views';
import { lotSummary, type LotSummary } from './lots';
import { queueCertificateMail } from './mail/certificate';
import { lotSets } from './matched-sets';
import { finish, heading, newDocument, PDF_COLOURS, table } from './pdf';
import { getProductByCode, type ProductRecord } from './products';
import { planLines } from './setup-views';

/** Printed on every certificate and shown beside the release form. */
export const QUALITY_STATEMENT =
	'Biasline records the measurements and judges each part against the spec plan; the release of this lot is a decision of the site’s quality system and follows its procedures.';

/** The site's name for letterheads (meta key 'site-name'), or a neutral default. */
export async function siteName(): Promise<string> {
	const rows = await db().query<{ value: unknown }>("SELECT value FROM meta WHERE key = 'site-name'", { type: QueryTypes.SELECT });
	const v = rows[0]?.value;
	return typeof v === 'string' && v.trim() ? v : 'Test site';
}

const fmt = (v: number | null | undefined, digits = 4) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : String(Number(v.toPrecision(digits))));
// The index on one line and its 95 % interval on the next, so narrow columns do not break mid-number.
const withCi = (e: { value: number; lower: number; upper: number } | null) => (e ? `${fmt(e.value, 3)}\n${fmt(e.lower, 3)} – ${fmt(e.upper, 3)}` : '—');

function capabilityRows(chars: Characteristic[]): string[][] {
	return chars.map((c) => {
		const r = c.capability;
		const u = c.unit ? ` ${c.unit}` : '';
		return [
			c.label,
			String(c.n),
			c.mean === null ? '—' : `${fmt(c.mean)}${u}`,
			c.lsl === null ? '—' : fmt(c.lsl),
			c.usl === null ? '—' : fmt(c.usl),
			r ? withCi(r.cp) : '—',
			r ? withCi(r.cpk) : (c.note ?? '—'),
			r ? withCi(r.ppk) : '—',
			r?.normality ? fmt(r.normality.pValue, 3) : '—'
		];
	});
}

export type CertificateRefusal = { ok: false; status: 404 | 409; message: string };
export type Certificate = { ok: true; bytes: Buffer; filename: string; summary: LotSummary; product: ProductRecord };

/**
 * The certificate of a lot, issued by `issuer` at `now`. Refused (409) unless the lot is released:
 * a certificate states conformance, which a pending or held lot has not been given.
 */
export async function lotCertificate(number: string, issuer: SessionUser, now: Date): Promise<Certificate | CertificateRefusal> {
	const summary = await lotSummary(number);
	if (!summary) return { ok: false, status: 404, message: 'No such lot' };
	const { lot } = summary;
	if (lot.disposition !== 'released') {
		return { ok: false, status: 409, message: `Lot ${lot.number} is ${lot.disposition}: a certificate is issued only for a released lot` };
	}
	const product = await getProductByCode(lot.productCode);
	if (!product) return { ok: false, status: 404, message: 'The lot’s product is gone' };
	const plan = product.plan.plan;
	const [{ characteristics, parts }, sets, site] = await Promise.all([lotCharacteristics(lot.id, plan), lotSets(lot.id, { limit: 1, offset: 0 }), siteName()]);

	const doc = newDocument({ title: 'Certificate of conformance', subtitle: `Lot ${lot.number} · ${product.code} ${product.name}`, site, generatedAt: now });
	heading(doc, 'Lot');
	const yieldText = summary.yieldPct === null ? '—' : `${summary.yieldPct.toFixed(2)} %`;
	table(
		doc,
		[
			{ header: 'Item', width: 0.3 },
			{ header: 'Value', width: 0.7 }
		],
		[
			['Lot', lot.number],
			['Product', `${product.code} · ${product.name}`],
			['Spec plan', `version ${product.plan.version} (in force at issue; each part is judged by the version in force when it was tested)`],
			['Quantity', lot.quantity.toLocaleString('en-US')],
			['Tested', summary.tested.toLocaleString('en-US')],
			['Passed', summary.passed.toLocaleString('en-US')],
			['Yield', yieldText],
			['Status', `${lot.status}${lot.closedAt ? `, closed ${lot.closedAt.slice(0, 10)}` : ''}`],
			['Disposition', `released${lot.dispositionAt ? ` ${lot.dispositionAt.slice(0, 10)}` : ''}${lot.dispositionBy ? ` by ${lot.dispositionBy}` : ''}${lot.dispositionReason ? `: ${lot.dispositionReason}` : ''}`]
		]
	);
	heading(doc, 'Bins');
	const names = binNames(plan);
	table(
		doc,
		[
			{ header: 'Bin', width: 0.5 },
			{ header: 'Parts', width: 0.25, align: 'right' },
			{ header: 'Share', width: 0.25, align: 'right' }
		],
		Object.entries(summary.bins).map(([bin, n]) => [`${bin} · ${names.get(Number(bin)) ?? 'other'}`, n.toLocaleString('en-US'), summary.tested ? `${((100 * n) / summary.tested).toFixed(2)} %` : '—'])
	);
	heading(doc, `Spec plan, version ${product.plan.version}`);
	table(
		doc,
		[
			{ header: 'Test', width: 0.35 },
			{ header: 'Limit', width: 0.65 }
		],
		planLines(plan).map((l) => [l.field, l.value])
	);
	heading(doc, 'Capability');
	doc.fontSize(9).fillColor(PDF_COLOURS.muted).text(
		`From ${parts.toLocaleString('en-US')} production parts in test order (the newest 10 000 when the lot is larger). 95 % intervals: chi-square for Cp, Bissell for Cpk and Ppk; normality by Anderson–Darling (p). Capacitance in pF.`
	);
	doc.moveDown(0.3).fillColor(PDF_COLOURS.ink);
	table(
		doc,
		[
			{ header: 'Characteristic', width: 0.16 },
			{ header: 'n', width: 0.06, align: 'right' },
			{ header: 'Mean', width: 0.1, align: 'right' },
			{ header: 'LSL', width: 0.08, align: 'right' },
			{ header: 'USL', width: 0.08, align: 'right' },
			{ header: 'Cp', width: 0.14, align: 'right' },
			{ header: 'Cpk', width: 0.14, align: 'right' },
			{ header: 'Ppk', width: 0.14, align: 'right' },
			{ header: 'AD p', width: 0.1, align: 'right' }
		],
		capabilityRows(characteristics)
	);
	heading(doc, 'Matched sets');
	const b = sets.build;
	doc.fontSize(10).text(
		b
			? `${b.setCount.toLocaleString('en-US')} sets of ${b.setSize} within ±${fmt(b.tolerancePct)} % at every plan point, from ${b.candidates.toLocaleString('en-US')} good parts (${b.unmatched.toLocaleString('en-US')} unmatched); built ${b.builtAt.slice(0, 10)}${b.builtBy ? ` by ${b.builtBy}` : ''}.`
			: 'No matched sets were built for this lot.'
	);
	heading(doc, 'Release');
	doc.fontSize(10).text(QUALITY_STATEMENT);
	doc.moveDown(1.5);
	const date = now.toISOString().slice(0, 10);
	doc.text(`Name: ${issuer.name}`).text(`Role: ${ROLE_LABELS[issuer.role]}`).text(`Date: ${date}`).moveDown(1.2);
	doc.text('Signature: ____________________________________');
	const bytes = await finish(doc);
	return { ok: true, bytes, filename: `${lot.number.replace(/[^A-Za-z0-9._-]/g, '_')}-certificate.pdf`, summary, product };
}

export type MailCertificateResult = { ok: true; queueId: number } | CertificateRefusal;

/**
 * Issues the lot's certificate and queues it for a customer contact, with an audit entry naming
 * the address and the PDF's SHA-256, in one transaction (the sender sends it after the commit).
 */
export async function mailCertificate(
	issuer: SessionUser,
	number: string,
	input: { to: string; contact?: string; note?: string },
	now: Date
): Promise<MailCertificateResult> {
	const cert = await lotCertificate(number, issuer, now);
	if (!cert.ok) return cert;
	const site = await siteName();
	const sha256 = createHash('sha256').update(cert.bytes).digest('hex');
	const queueId = await db().transaction(async (t) => {
		const id = await queueCertificateMail(
			t,
			input.to,
			{
				lotNumber: cert.summary.lot.number,
				productCode: cert.product.code,
				yieldPct: cert.summary.yieldPct,
				contact: input.contact ?? null,
				note: input.note ?? null,
				sentBy: `${issuer.name}, ${ROLE_LABELS[issuer.role]}, ${site}`,
				site
			},
			{ filename: cert.filename, contentType: 'application/pdf', content: cert.bytes }
		);
		await audit({ userId: issuer.id, label: issuer.email }, 'lot', number, 'certificate-mail', null, { to: input.to, contact: input.contact ?? null, bytes: cert.bytes.length, sha256, queueId: id }, t);
		return id;
	});
	return { ok: true, queueId };
}
