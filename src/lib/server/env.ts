// The only reader of $env/*: validates the process settings once and exports one typed object.
import { env as raw } from '$env/dynamic/private';
import { z } from 'zod';

const Settings = z.object({
	DATABASE_URL: z.string().min(1, 'DATABASE_URL is required (the start command sets it)'),
	BIASLINE_SESSION_KEY: z.string().min(32, 'BIASLINE_SESSION_KEY must be at least 32 characters'),
	BIASLINE_DATA_DIR: z.string().default('.data'),
	BIASLINE_DEMO: z.enum(['0', '1']).default('0'),
	BIASLINE_ADMIN_EMAIL: z.email().default('admin@corvane.example'),
	BIASLINE_ADMIN_PASSWORD: z.string().min(8).default('biasline-admin'),
	/** Hours a sign-in lasts. */
	BIASLINE_SESSION_HOURS: z.coerce.number().positive().max(24 * 30).default(12),
	/** Where alarm e-mail goes (`smtp://` or `smtps://`, user and password in the URL); unset: no mail is sent. */
	BIASLINE_SMTP_URL: z.preprocess(
		(v) => (v === '' ? undefined : v),
		z.string().regex(/^smtps?:\/\/[^/\s]+/, 'BIASLINE_SMTP_URL must look like smtp://host:port').optional()
	),
	/** The From of alarm e-mail (an RFC 5322 mailbox). */
	BIASLINE_MAIL_FROM: z.string().min(3).default('Biasline <biasline@localhost>'),
	/** The folder the local test mail server keeps messages in (read by /admin/outbox). */
	BIASLINE_OUTBOX_DIR: z.preprocess((v) => (v === '' ? undefined : v), z.string().optional())
});

export type Settings = z.infer<typeof Settings>;

let cached: Settings | null = null;

/** The validated settings; throws a readable message at start-up when one is missing or wrong. */
export function settings(): Settings {
	if (cached) return cached;
	const parsed = Settings.safeParse({ ...raw });
	if (!parsed.success) {
		const lines = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
		throw new Error(`Invalid settings:\n  ${lines.join('\n  ')}`);
	}
	cached = parsed.data;
	return cached;
}
