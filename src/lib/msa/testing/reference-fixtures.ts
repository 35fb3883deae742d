/**
 * Test support only (imported by the *.test.ts files, never by the domain modules): loads the
 * published gauge R&R examples copied from shared/reference/msa/gauge-rr-examples.json into
 * tests/reference/msa/, keeping their source fields, and the control-chart constants subset
 * copied from shared/reference/spc/control-chart-constants.json.
 */
import { readFileSync } from 'node:fs';
import { z } from 'zod';
import type { MsaRow } from '../types';

const referenceDir = new URL('../../../../tests/reference/msa/', import.meta.url);

const rowSchema = z.object({
	part: z.union([z.number(), z.string()]),
	operator: z.union([z.number(), z.string()]),
	trial: z.number(),
	value: z.number()
});

const exampleSchema = z
	.object({
		id: z.string(),
		source: z.string(),
		source_url: z.string(),
		data: z.object({ rows: z.array(rowSchema) }),
		published_results: z.record(z.string(), z.unknown()),
		computed_check: z.record(z.string(), z.unknown())
	})
	.loose();

const fileSchema = z.object({ examples: z.array(exampleSchema) }).loose();

export type ReferenceExample = z.infer<typeof exampleSchema>;

/** Loads one example by id; throws in the test (not in domain code) if the file is malformed. */
export function loadExample(id: string): { example: ReferenceExample; rows: MsaRow[] } {
	const file = fileSchema.parse(
		JSON.parse(readFileSync(new URL('gauge-rr-examples.json', referenceDir), 'utf8'))
	);
	const example = file.examples.find((e) => e.id === id);
	if (!example) throw new Error(`reference example ${id} not found`);
	const rows = example.data.rows.map((r) => ({
		part: String(r.part),
		appraiser: String(r.operator),
		trial: r.trial,
		value: r.value
	}));
	return { example, rows };
}

/** Reads a nested value of the example as a number, failing the test loudly if absent. */
export function num(root: unknown, ...path: (string | number)[]): number {
	let node: unknown = root;
	for (const key of path) {
		if (typeof node !== 'object' || node === null) throw new Error(`missing ${path.join('.')}`);
		node = (node as Record<string | number, unknown>)[key];
	}
	if (typeof node !== 'number') throw new Error(`not a number at ${path.join('.')}`);
	return node;
}

/** Reads a nested array of numbers of the example. */
export function nums(root: unknown, ...path: (string | number)[]): number[] {
	let node: unknown = root;
	for (const key of path) {
		if (typeof node !== 'object' || node === null) throw new Error(`missing ${path.join('.')}`);
		node = (node as Record<string | number, unknown>)[key];
	}
	if (!Array.isArray(node) || !node.every((x) => typeof x === 'number')) {
		throw new Error(`not a number array at ${path.join('.')}`);
	}
	return node;
}

const constantsSchema = z
	.object({
		table: z.array(z.object({ n: z.number(), D3: z.number(), D4: z.number(), d2: z.number(), d3: z.number() })),
		computed_check: z.object({
			values: z.record(z.string(), z.object({ d2: z.number(), d3: z.number(), D3: z.number(), D4: z.number() }))
		})
	})
	.loose();

/** Control chart constants (ASTM / Montgomery tables and their numerical check), subset. */
export function loadControlChartConstants(): z.infer<typeof constantsSchema> {
	return constantsSchema.parse(
		JSON.parse(readFileSync(new URL('control-chart-constants-subset.json', referenceDir), 'utf8'))
	);
}
