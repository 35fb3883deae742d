// Turns zod issues into the per-field messages forms show beside each field, and the
// `errors` list of an RFC 9457 problem document.
import type { z } from 'zod';

export type FieldErrors = Record<string, string>;

/** First message per dotted field path. */
export function fieldErrors(error: z.ZodError): FieldErrors {
	const out: FieldErrors = {};
	for (const issue of error.issues) {
		const key = issue.path.join('.') || '_';
		out[key] ??= issue.message;
	}
	return out;
}

/** Every issue as `{ path, message }`, for the API's problem documents. */
export function issueList(error: z.ZodError): { path: string; message: string }[] {
	return error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

/** FormData → plain object of strings (the last value wins for repeated names). */
export function formObject(data: FormData): Record<string, string> {
	const out: Record<string, string> = {};
	for (const [k, v] of data.entries()) if (typeof v === 'string') out[k] = v;
	return out;
}
