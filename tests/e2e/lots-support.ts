// Shared by the lot tests: a test line with a judged plan, parts posted with known deviations,
// and reading a certificate e-mail back from the local test mail server's folder.
import path from 'node:path';
import { listOutbox, readOutboxMessage } from '$lib/server/mail/outbox';
import { pF } from './physics';
import { setUpLine, type TestLine } from './line';

/** Test plan: windows around the abrupt test part (26.49 pF at 1 V, 16.19 pF at 4 V), a ratio and matching. */
export const LOT_PLAN = {
	points: [
		{ biasV: 1, minF: 25 * pF, maxF: 28 * pF },
		{ biasV: 4, minF: 15 * pF, maxF: 17.5 * pF }
	],
	ratio: { lowBiasV: 1, highBiasV: 4, min: 1.5 },
	matching: { setSize: 2, tolerancePct: 1 }
};

export type PostedPart = { serial: string; pass: boolean; bin: number; capacitanceF: number[] };

/**
 * Posts `n` parts: every tenth 10 % high (C at 1 V above 28 pF: a capacitance failure, bin 2), the
 * rest spread within ±2 % by a fixed pattern. Returns the answers in test order.
 */
export async function postLotParts(line: TestLine, n: number): Promise<PostedPart[]> {
	const out: PostedPart[] = [];
	for (let start = 0; start < n; start += 100) {
		const parts = Array.from({ length: Math.min(100, n - start) }, (_, j) => {
			const i = start + j;
			return line.part(i % 10 === 9 ? 0.1 : 0.02 * Math.sin(i * 1.7));
		});
		const answer = (await line.post(parts)) as unknown as { results: PostedPart[] };
		out.push(...answer.results);
	}
	return out;
}

export async function lotLine(prefix: string): Promise<TestLine> {
	return setUpLine({ prefix, biases: [1, 4], plan: LOT_PLAN });
}

export function outboxDir(): string {
	const base = process.env.BIASLINE_DATA_DIR;
	if (!base) throw new Error('BIASLINE_DATA_DIR is not set: run the tests with npm test');
	return path.join(base, 'e2e', 'outbox');
}

/** The raw message sent to `to`, once the local test mail server has it (null until then). */
export async function messageTo(to: string): Promise<string | null> {
	const entries = await listOutbox(outboxDir(), 500);
	const hit = entries.find((e) => e.to.includes(to));
	if (!hit) return null;
	return (await readOutboxMessage(outboxDir(), hit.id))?.source ?? null;
}

/**
 * The first application/pdf part of a MIME message, base64-decoded to bytes (RFC 2045 6.8), with
 * the filename from its headers. Written here, apart from the product's own reader (which decodes
 * leaf parts to text): the part's headers run from its Content-Type to the first empty line
 * (RFC 5322 2.1), its body to the next boundary line ("--", RFC 2046 5.1.1).
 */
export function pdfAttachment(source: string): { filename: string | null; bytes: Buffer } | null {
	const at = source.search(/^Content-Type:\s*application\/pdf/im);
	if (at < 0) return null;
	const headEnd = source.indexOf('\r\n\r\n', at);
	if (headEnd < 0) return null;
	const headers = source.slice(at, headEnd).replace(/\r\n[ \t]+/g, ' ');
	const bodyEnd = source.indexOf('\r\n--', headEnd);
	const body = source.slice(headEnd + 4, bodyEnd < 0 ? undefined : bodyEnd);
	const filename = /filename="?([^";\r\n]+)"?/i.exec(headers)?.[1] ?? null;
	if (!/Content-Transfer-Encoding:\s*base64/i.test(headers)) return null;
	return { filename, bytes: Buffer.from(body.replace(/\s+/g, ''), 'base64') };
}
