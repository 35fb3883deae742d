// parseFloatArray against the PostgreSQL driver's own float8[] parser (the `pg` package's type
// parser for OID 1022), on array texts in the form PostgreSQL writes them (PostgreSQL 15 manual,
// §8.15.6 "Array Input and Output Syntax": braces, comma-separated, unquoted NULL, and the
// float8 specials NaN, Infinity, -Infinity of §8.1.3).
import pg from 'pg';
import { describe, expect, test } from 'vitest';
import { parseFloatArray } from './lot-views';

/** The type oid of float8[] (pg_type.oid of _float8 in every PostgreSQL catalog); the driver's typings list only scalar oids. */
const FLOAT8_ARRAY_OID = 1022 as Parameters<typeof pg.types.getTypeParser>[0];
const driver = pg.types.getTypeParser(FLOAT8_ARRAY_OID, 'text') as (text: string) => (number | null)[];

describe('parseFloatArray', () => {
	const texts = [
		'{}',
		'{1}',
		'{1,2,3,4,6,8,15,25}',
		'{2.6493e-11,1.6190000000000002e-11,NULL,9.87e-12}',
		'{NaN,Infinity,-Infinity,-0,0}',
		'{-3.25e+20,5e-324,1.7976931348623157e+308}',
		'{NULL,NULL}'
	];
	test.each(texts)('%s reads as the driver reads it', (text) => {
		expect(parseFloatArray(text)).toStrictEqual(driver(text));
	});

	test('random doubles written by the shortest round-trip form come back bit for bit', () => {
		// PostgreSQL 12+ writes float8 in the shortest form that reads back exactly, as JavaScript's
		// Number → string does (ECMA-262 Number::toString), so String(x) is that form.
		let seed = 12345;
		const next = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31 - 0.5) * 10 ** ((seed % 40) - 20);
		const values = Array.from({ length: 500 }, next);
		const text = `{${values.map(String).join(',')}}`;
		expect(parseFloatArray(text)).toStrictEqual(values);
		expect(parseFloatArray(text)).toStrictEqual(driver(text));
	});

	test('SQL NULL (no array) is null', () => {
		expect(parseFloatArray(null)).toBeNull();
	});
});
