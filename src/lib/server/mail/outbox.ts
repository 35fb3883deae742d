// Reads the local test mail server's folder (src/ops/smtp.mjs writes it): a JSON sidecar and an
// .eml file per message. Only names the server itself makes are opened, so a crafted id in the
// URL cannot leave the folder.
import fs from 'node:fs/promises';
import path from 'node:path';
import { z } from 'zod';
import { findPart, parseMime } from './mime';

export const OUTBOX_ID = /^[0-9TZ]+-[0-9a-f]{8}$/;

const Sidecar = z.object({
	id: z.string().regex(OUTBOX_ID),
	receivedAt: z.string(),
	from: z.string(),
	to: z.array(z.string()),
	subject: z.string(),
	bytes: z.number().optional()
});

export type OutboxEntry = { id: string; receivedAt: string; from: string; to: string[]; subject: string };
export type OutboxMessage = OutboxEntry & { text: string | null; source: string };

/** The newest `limit` messages first; an absent folder is an empty outbox. */
export async function listOutbox(dir: string, limit = 200): Promise<OutboxEntry[]> {
	let names: string[];
	try {
		names = await fs.readdir(dir);
	} catch {
		return [];
	}
	const sidecars = names.filter((n) => n.endsWith('.json') && OUTBOX_ID.test(n.slice(0, -5)));
	// Ids begin with the compact ISO receive time, so the name order is the time order.
	sidecars.sort((a, b) => b.localeCompare(a));
	const out: OutboxEntry[] = [];
	for (const name of sidecars.slice(0, limit)) {
		try {
			const parsed = Sidecar.safeParse(JSON.parse(await fs.readFile(path.join(dir, name), 'utf8')));
			if (parsed.success) out.push({ id: parsed.data.id, receivedAt: parsed.data.receivedAt, from: parsed.data.from, to: parsed.data.to, subject: parsed.data.subject });
		} catch {
			// A sidecar being written or damaged: leave it out.
		}
	}
	return out;
}

/** One message with its plain-text part decoded (null when it has none) and its source; null when absent. */
export async function readOutboxMessage(dir: string, id: string): Promise<OutboxMessage | null> {
	if (!OUTBOX_ID.test(id)) return null;
	try {
		const side = Sidecar.safeParse(JSON.parse(await fs.readFile(path.join(dir, `${id}.json`), 'utf8')));
		if (!side.success) return null;
		const source = await fs.readFile(path.join(dir, `${id}.eml`), 'utf8');
		const text = findPart(parseMime(source), 'text/plain')?.body ?? null;
		const { receivedAt, from, to, subject } = side.data;
		return { id, receivedAt, from, to, subject, text, source };
	} catch {
		return null;
	}
}
