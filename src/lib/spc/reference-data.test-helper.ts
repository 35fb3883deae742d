/** Loads the copied reference files of tests/reference/spc for the SPC tests. */
import { readFileSync } from 'node:fs';
import { z } from 'zod';

/** Reads and validates one reference file; assumes it exists under tests/reference/spc. */
export function loadReference<T>(fileName: string, schema: z.ZodType<T>): T {
	const url = new URL(`../../../tests/reference/spc/${fileName}`, import.meta.url);
	return schema.parse(JSON.parse(readFileSync(url, 'utf8')));
}
