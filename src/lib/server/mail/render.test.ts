import { describe, expect, test } from 'vitest';
import { escapeHtml, headerText, renderAlarmMail } from './render';
import type { AlarmMail } from './types';

const alarm = (over: Partial<AlarmMail> = {}): AlarmMail => ({
	alarmId: 41,
	rule: 'WE1',
	ruleDescription: 'One point beyond 3 sigma',
	chart: 'C@1V',
	stationName: 'A-02',
	lineId: 1,
	lineName: 'Line A',
	productId: 7,
	productCode: 'KV-1405',
	lotNumber: 'L-2026-118',
	suspect: 'tester',
	reasoning: 'The reference part moved by the same amount.',
	openedAt: '2026-12-01T20:27:00.000Z',
	url: 'https://biasline.example/alarms/41',
	...over
});

describe('escapeHtml', () => {
	// The five characters OWASP's XSS prevention cheat sheet (rule #1) says to encode in HTML content.
	test.each([
		['&', '&amp;'],
		['<', '&lt;'],
		['>', '&gt;'],
		['"', '&quot;'],
		["'", '&#39;'],
		['<b>A&B</b>', '&lt;b&gt;A&amp;B&lt;/b&gt;'],
		['', '']
	])('%j → %j', (input, expected) => expect(escapeHtml(input)).toBe(expected));
});

describe('headerText', () => {
	test('CR and LF cannot start a new header (RFC 5322 2.2: a header field is one logical line)', () => {
		expect(headerText('WE1\r\nBcc: victim@example.com')).toBe('WE1 Bcc: victim@example.com');
	});
});

describe('renderAlarmMail, one alarm', () => {
	test('the subject names rule, station, chart and product', () => {
		expect(renderAlarmMail([alarm()]).subject).toBe('[Biasline] WE1 on A-02 · C@1V · KV-1405');
	});

	test('the text lists every fact and the link', () => {
		const { text } = renderAlarmMail([alarm()]);
		for (const s of ['WE1: One point beyond 3 sigma', 'C@1V', 'A-02', 'Line A', 'KV-1405', 'L-2026-118', 'the tester', '2026-12-01 20:27 UTC', 'The reference part moved', 'https://biasline.example/alarms/41']) {
			expect(text).toContain(s);
		}
		expect(text).toContain('https://biasline.example/account');
	});

	test('HTML in station and rule names is escaped in the HTML part, and stays literal in the text', () => {
		const evil = alarm({ stationName: '<script>alert(1)</script>', rule: 'N2 "x" & <i>y</i>', ruleDescription: "<img src=x onerror='1'>" });
		const { html, text, subject } = renderAlarmMail([evil]);
		expect(html).not.toContain('<script>');
		expect(html).not.toContain('<img');
		expect(html).not.toContain('<i>y</i>');
		expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
		expect(html).toContain('N2 &quot;x&quot; &amp; &lt;i&gt;y&lt;/i&gt;');
		expect(html).toContain('&lt;img src=x onerror=&#39;1&#39;&gt;');
		expect(text).toContain('<script>alert(1)</script>');
		expect(subject).toBe('[Biasline] N2 "x" & <i>y</i> on <script>alert(1)</script> · C@1V · KV-1405');
	});

	test('a link that is not http(s) never becomes an href', () => {
		// The schema refuses such URLs before queueing; the renderer does not rely on it.
		const { html } = renderAlarmMail([alarm({ url: 'javascript:alert(1)' })]);
		expect(html).not.toMatch(/href="javascript:/);
	});

	test('missing line, lot and suspect read as such', () => {
		const { text } = renderAlarmMail([alarm({ lineId: null, lineName: null, lotNumber: null, suspect: null })]);
		expect(text).toMatch(/Line:\s+—/);
		expect(text).toMatch(/Lot:\s+—/);
		expect(text).toContain('not known yet');
	});
});

describe('renderAlarmMail, a digest', () => {
	const three = [
		alarm({ alarmId: 1, rule: 'WE1', stationName: 'A-01' }),
		alarm({ alarmId: 2, rule: 'WE2', stationName: 'A-02', chart: 'Q@4V' }),
		alarm({ alarmId: 3, rule: 'N7', stationName: 'B-01', productCode: 'KV-2210H', lineName: 'Line B' })
	];

	test('the subject counts the alarms', () => {
		expect(renderAlarmMail(three).subject).toBe('[Biasline] 3 new alarms');
	});

	test('text and HTML list every alarm, in order', () => {
		const { text, html } = renderAlarmMail(three);
		const titles = ['WE1 on A-01 · C@1V · KV-1405', 'WE2 on A-02 · Q@4V · KV-1405', 'N7 on B-01 · C@1V · KV-2210H'];
		const at = titles.map((t) => text.indexOf(t));
		expect(at.every((i) => i >= 0)).toBe(true);
		expect([...at].sort((a, b) => a - b)).toEqual(at);
		for (const t of titles) expect(html).toContain(escapeHtml(t));
		expect(text.match(/Open the alarm:/g)).toHaveLength(3);
		expect(html.match(/>Open the alarm</g)).toHaveLength(3);
	});

	test('no alarm at all is a programming error', () => {
		expect(() => renderAlarmMail([])).toThrow(/at least one/);
	});
});
