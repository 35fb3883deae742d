// Renders the alarm e-mail: a subject, a plain-text body and a simple HTML body. Pure: plain data
// in, strings out. Every value from the database is escaped in the HTML, and control characters
// are removed from the subject (a header must not carry CR/LF, RFC 5322 section 2.2).
import type { AlarmMail } from './types';

export type RenderedMail = { subject: string; text: string; html: string };

const SUSPECT_TEXT: Record<NonNullable<AlarmMail['suspect']>, string> = {
	tester: 'the tester (seen on its reference part)',
	product: 'the product',
	lot: 'this lot'
};

/** Escapes text for HTML element content and quoted attribute values (OWASP XSS rule #1/#2). */
export function escapeHtml(value: string): string {
	return value
		.replace(/&/g, '&amp;')
		.replace(/</g, '&lt;')
		.replace(/>/g, '&gt;')
		.replace(/"/g, '&quot;')
		.replace(/'/g, '&#39;');
}

/** One line of header text: control characters (CR, LF, TAB, …) become spaces, runs collapse. */
export function headerText(value: string): string {
	// eslint-disable-next-line no-control-regex
	return value.replace(/[\u0000-\u001f\u007f]+/g, ' ').replace(/ {2,}/g, ' ').trim();
}

/** An http(s) link or null: anything else (javascript:, data:) is never put into an href. */
function safeUrl(url: string): string | null {
	try {
		const u = new URL(url);
		return u.protocol === 'http:' || u.protocol === 'https:' ? u.href : null;
	} catch {
		return null;
	}
}

/** `2026-12-01 20:27 UTC` from an ISO time; the raw text when it is not a time. */
export function utcMinute(iso: string): string {
	const d = new Date(iso);
	return Number.isFinite(d.getTime()) ? `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC` : iso;
}

/** `WE1 on A-02 · C@1V · KV-1405`: what the single-alarm subject says after the prefix. */
export function alarmTitle(a: AlarmMail): string {
	return headerText(`${a.rule} on ${a.stationName} · ${a.chart} · ${a.productCode}`);
}

function facts(a: AlarmMail): [string, string][] {
	return [
		['Rule', a.ruleDescription ? `${a.rule}: ${a.ruleDescription}` : a.rule],
		['Chart', a.chart],
		['Station', a.stationName],
		['Line', a.lineName ?? '—'],
		['Product', a.productCode],
		['Lot', a.lotNumber ?? '—'],
		['Suspect', a.suspect ? SUSPECT_TEXT[a.suspect] : 'not known yet'],
		['Opened', utcMinute(a.openedAt)]
	];
}

function alarmText(a: AlarmMail): string {
	const lines = facts(a).map(([k, v]) => `${`${k}:`.padEnd(9)}${v}`);
	if (a.reasoning) lines.push('', a.reasoning);
	lines.push('', `Open the alarm: ${a.url}`);
	return lines.join('\n');
}

function alarmHtml(a: AlarmMail): string {
	const rows = facts(a)
		.map(([k, v]) => `<tr><th align="left" style="padding:2px 12px 2px 0;color:#555">${escapeHtml(k)}</th><td style="padding:2px 0">${escapeHtml(v)}</td></tr>`)
		.join('');
	const link = safeUrl(a.url);
	const reasoning = a.reasoning ? `<p style="margin:8px 0">${escapeHtml(a.reasoning)}</p>` : '';
	const open = link ? `<p style="margin:8px 0"><a href="${escapeHtml(link)}">Open the alarm</a></p>` : `<p>${escapeHtml(a.url)}</p>`;
	return `<h2 style="font-size:16px;margin:16px 0 4px">${escapeHtml(alarmTitle(a))}</h2><table style="border-collapse:collapse;font-size:14px">${rows}</table>${reasoning}${open}`;
}

function accountUrl(alarms: AlarmMail[]): string | null {
	const first = alarms[0] ? safeUrl(alarms[0].url) : null;
	return first ? new URL('/account', first).href : null;
}

/**
 * The message for one or more alarms (a digest holds several, oldest first). Assumes at least one
 * alarm; one alarm gets its own subject, several get `[Biasline] N new alarms`.
 */
export function renderAlarmMail(alarms: AlarmMail[]): RenderedMail {
	const first = alarms[0];
	if (!first) throw new Error('renderAlarmMail needs at least one alarm');
	const digest = alarms.length > 1;
	const subject = digest ? `[Biasline] ${alarms.length} new alarms` : `[Biasline] ${alarmTitle(first)}`;
	const account = accountUrl(alarms);
	const footerText = `You get this e-mail because you follow these lines or products in Biasline.${account ? ` Change it on ${account}` : ''}`;
	const lead = digest ? `${alarms.length} new alarms since the last message:` : 'A control chart raised a new alarm.';

	const text = digest
		? [lead, '', alarms.map((a, i) => `${i + 1}. ${alarmTitle(a)}\n${alarmText(a)}`).join('\n\n'), '', '-- ', footerText].join('\n')
		: [lead, '', alarmTitle(first), alarmText(first), '', '-- ', footerText].join('\n');

	const accountLink = account ? ` <a href="${escapeHtml(account)}">Change it on your account page</a>.` : '';
	const html = [
		'<!doctype html><html><body style="font-family:Arial,Helvetica,sans-serif;color:#1c1c1c">',
		`<p style="margin:0 0 8px">${escapeHtml(lead)}</p>`,
		...alarms.map(alarmHtml),
		`<p style="margin-top:24px;font-size:12px;color:#666">You get this e-mail because you follow these lines or products in Biasline.${accountLink}</p>`,
		'</body></html>'
	].join('\n');
	return { subject: headerText(subject), text, html };
}
