// Generated hostile requests. Each one is refused by construction, and the generator proves it
// before the request is sent (`certainRefusal`): a wrong content type, a bad Idempotency-Key, bad
// credentials, a body over a size limit, text that is not JSON, or JSON that the endpoint's own zod
// schema refuses. So any 2xx, anything stored, and any 5xx is the server's fault.
import type { z } from 'zod';

export type Rand = () => number;

export const pick = <T>(rand: Rand, xs: readonly T[]): T => {
	const x = xs[Math.floor(rand() * xs.length)];
	if (x === undefined) throw new Error('pick from an empty list');
	return x;
};
const int = (rand: Rand, lo: number, hi: number) => lo + Math.floor(rand() * (hi - lo + 1));

/** Hostile strings: SQL, HTML, unicode edge cases (RTL override, combining marks, emoji, lone surrogates), NUL. */
export const NASTY_STRINGS = [
	"'; DROP TABLE units; --",
	"' OR '1'='1",
	'1; SELECT pg_sleep(10)',
	'$$; COPY units TO PROGRAM $$id$$',
	'<script>alert(1)</script>',
	'"><img src=x onerror=alert(1)>',
	'javascript:alert(1)',
	'{{constructor.constructor("alert(1)")()}}',
	'LT\u202e7811-TL',
	'\u05e9\u05dc\u05d5\u05dd \u0645\u0631\u062d\u0628\u0627',
	'Z\u0351\u036b\u0343\u036a\u0302\u036b\u033d\u034f\u0334\u0319\u0324\u031e\u0349\u035a\u032f\u031e\u0320\u034dA\u036b\u0357\u0334\u0362\u0335\u031c\u0330\u0354L',
	'\u{1F4A5}\u{1F525}\u{1F9EA}\u200d\u{1F468}\u200d\u{1F52C}',
	'\ud800 lone surrogate',
	'nul\u0000byte',
	'\u0000',
	'\ufeffBOM',
	'%00%27%22',
	'../../../../etc/passwd',
	'\r\nSet-Cookie: x=1',
	'A'.repeat(300)
] as const;

/** Numbers as JSON can carry them, including the extremes of binary64. */
const EXTREME_NUMBERS = [1e308, -1e308, 5e-324, -5e-324, 1.7976931348623157e308, -1, 0, 1e10 + 1, 2 ** 53 + 1, 1e-300];
// Strings that look like numbers; a schema must not coerce them.
const NUMBER_LIKE = ['NaN', 'Infinity', '-Infinity', '1e308', '0x10', '1', '', ' '];

/** Nested arrays or objects `depth` levels deep, as JSON text (built as text: no recursion limit on our side). */
export function deepText(depth: number, kind: 'array' | 'object'): string {
	return kind === 'array' ? '['.repeat(depth) + ']'.repeat(depth) : '{"a":'.repeat(depth) + '1' + '}'.repeat(depth);
}

type Json = null | boolean | number | string | Json[] | { [k: string]: Json };
type Obj = { [k: string]: Json };

// Values that JSON.stringify cannot write (-0 becomes 0) or that are too deep to build as objects
// go in as markers and are put into the text afterwards.
const RAW = '\u0001raw:';
const raw = (text: string) => `${RAW}${text}\u0001`;
function render(value: Json, raws: string[]): string {
	return JSON.stringify(value).replace(/"\\u0001raw:(\d+)\\u0001"/g, (_, i: string) => raws[Number(i)] ?? 'null');
}

function isObj(x: Json | undefined): x is Obj {
	return typeof x === 'object' && x !== null && !Array.isArray(x);
}

/** A mutation that the schema must refuse on its own, or noise that may be valid by itself. */
type Mutation = (o: Obj, rand: Rand, raws: string[]) => string;

function units(o: Obj): Obj[] {
	const us = o.units;
	return Array.isArray(us) ? us.filter(isObj) : [];
}
function someUnit(o: Obj, rand: Rand): Obj {
	return pick(rand, units(o));
}
function somePoint(o: Obj, rand: Rand): Obj {
	const pts = someUnit(o, rand).points;
	return pick(rand, Array.isArray(pts) ? pts.filter(isObj) : []);
}
const addRaw = (raws: string[], text: string) => {
	raws.push(text);
	return raw(String(raws.length - 1));
};

/** Results-body mutations that make the body invalid by themselves. */
export const RESULT_KILLERS: Record<string, Mutation> = {
	serialType(o, rand) {
		someUnit(o, rand).serial = pick(rand, [42, null, true, [], {}, 1e308] as Json[]);
		return 'serial of a wrong type';
	},
	serialBlankOrLong(o, rand) {
		someUnit(o, rand).serial = pick(rand, ['', '   ', '\t', 'S'.repeat(int(rand, 81, 20_000)), pick(rand, NASTY_STRINGS) + 'x'.repeat(81)]);
		return 'serial blank or over 80 characters';
	},
	serialControl(o, rand) {
		someUnit(o, rand).serial = pick(rand, ['nul\u0000byte', 'tab\tinside', 'bell\u0007', 'del\u007f', 'new\nline']);
		return 'serial with a control character';
	},
	testedAt(o, rand) {
		someUnit(o, rand).testedAt = pick(rand, ['NaN', '', 'yesterday', '2026-02-30T25:61:00Z', '2026-03-02T07:15:00', '2026-03-02', 0, null, ...NASTY_STRINGS] as Json[]);
		return 'testedAt not an ISO time with a zone';
	},
	kind(o, rand) {
		someUnit(o, rand).kind = pick(rand, ['bench', 'study', 'PRODUCTION', '', 0, null, '<script>alert(1)</script>'] as Json[]);
		return 'kind not production or reference';
	},
	temperature(o, rand) {
		someUnit(o, rand).temperatureC = pick(rand, [1e308, -1e308, 200.0001, -60.5, ...NUMBER_LIKE, null, true] as Json[]);
		return 'temperatureC out of range or not a number';
	},
	leakage(o, rand) {
		someUnit(o, rand).leakageA = pick(rand, [-5e-324, -1, 1.5, 1e308, -1e308, ...NUMBER_LIKE, null] as Json[]);
		return 'leakageA out of range or not a number';
	},
	bias(o, rand) {
		somePoint(o, rand).biasV = pick(rand, [-1e-9, -1e308, 1e308, 1000.5, -5e-324, ...NUMBER_LIKE, null, [], {}] as Json[]);
		return 'biasV out of range or not a number';
	},
	resonance(o, rand, raws) {
		somePoint(o, rand).resonanceHz = pick(rand, [0, addRaw(raws, '-0'), -5e-324, -1e308, 1e308, 1.0000001e10, ...NUMBER_LIKE, null, false] as Json[]);
		return 'resonanceHz not above 0, over 1e10 or not a number';
	},
	bandwidth(o, rand, raws) {
		somePoint(o, rand).bandwidthHz = pick(rand, [0, addRaw(raws, '-0'), -1, 1e308, ...NUMBER_LIKE, null] as Json[]);
		return 'bandwidthHz not above 0 or not a number';
	},
	missing(o, rand) {
		const which = pick(rand, ['lot', 'units', 'serial', 'testedAt', 'points', 'biasV', 'resonanceHz']);
		if (which === 'lot' || which === 'units') delete o[which];
		else if (which === 'biasV' || which === 'resonanceHz') delete somePoint(o, rand)[which];
		else delete someUnit(o, rand)[which];
		return `${which} missing`;
	},
	points(o, rand) {
		const u = someUnit(o, rand);
		const pts = Array.isArray(u.points) ? u.points.filter(isObj) : [];
		const first = pts[0] ?? { biasV: 1, resonanceHz: 1e6 };
		u.points = pick(rand, [
			[],
			Array.from({ length: 65 }, (_, i) => ({ biasV: i, resonanceHz: 1e6 })),
			[first, { ...first }],
			'points',
			{},
			5,
			null
		] as Json[]);
		return 'points empty, over 64, repeated bias or not an array';
	},
	units(o, rand) {
		const one = units(o)[0] ?? {};
		o.units = pick(rand, [[], Array.from({ length: 501 }, () => ({ ...one })), 'units', {}, null, [null], [1, 2]] as Json[]);
		return 'units empty, over 500 or not unit objects';
	},
	lot(o, rand) {
		// A space inside is never part of a lot number (trimming removes only the ends).
		o.lot = pick(rand, ['', ' ', 'L'.repeat(41), '-lead', 'lot with space', 'LT\u202e7811', 42, null, [], ...NASTY_STRINGS.map((x) => `LT ${x}`)] as Json[]);
		return 'lot number not of the lot-number form';
	},
	deep(o, rand, raws) {
		const depth = int(rand, 1000, 20_000);
		const kind = rand() < 0.5 ? 'array' : 'object';
		const text = addRaw(raws, deepText(depth, kind));
		const where = int(rand, 0, 3);
		if (where === 0) o.units = text;
		else if (where === 1) someUnit(o, rand).points = text;
		else if (where === 2) someUnit(o, rand).serial = text;
		else o.lot = text;
		return `nesting ${depth} deep`;
	}
};

/** Noise on top of a killer: each may be valid alone, so it never stands alone. */
export const RESULT_NOISE: Mutation[] = [
	(o, rand) => {
		someUnit(o, rand).serial = pick(rand, NASTY_STRINGS).slice(0, 80);
		return 'hostile serial';
	},
	(o, rand) => {
		const target = pick(rand, [o, someUnit(o, rand), somePoint(o, rand)]);
		target[pick(rand, ['extra', '__proto__', 'constructor', 'station', 'bin', 'pass', '$where'])] = pick(rand, [pick(rand, NASTY_STRINGS), 1e308, { admin: true }, [1, 2, 3]] as Json[]);
		return 'extra field';
	},
	(o, rand) => {
		somePoint(o, rand).biasV = pick(rand, [5e-324, 1e-300]);
		return 'tiny bias';
	},
	(o, rand, raws) => {
		someUnit(o, rand).temperatureC = addRaw(raws, '-0');
		return 'negative zero';
	},
	(o, rand) => {
		delete someUnit(o, rand).kind;
		return 'kind left out';
	},
	(o, rand) => {
		someUnit(o, rand).leakageA = pick(rand, [5e-324, 0, ...EXTREME_NUMBERS.filter((x) => x >= 0 && x <= 1)]);
		return 'extreme leakage';
	}
];

export type Hostile = {
	label: string;
	/** Which principal sends it: the line's station token, none, a bad one, or a person's cookie. */
	auth: 'station' | 'none' | 'bad-token' | 'malformed' | 'cookie';
	contentType: string | null;
	idempotencyKey: string | null;
	body: string;
	/** Why the server must refuse it (checked locally before sending). */
	because: 'content-type' | 'key' | 'auth' | 'not-json' | 'schema';
};

const GOOD_TYPES = ['application/json', 'application/json; charset=utf-8', 'application/problem+json'];
const BAD_TYPES = ['text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data; boundary=x', 'text/json', 'application/jsonx', 'application/json5', 'application/xml', ''];
const BAD_KEYS = ['', 'k'.repeat(256), 'has space', 'tab\there', 'caf\u00e9', 'a'.repeat(1000), '"quoted key"'];

/** Text that JSON.parse refuses, made from a valid body. */
function malformed(valid: string, rand: Rand): string {
	const way = int(rand, 0, 7);
	if (way === 0) return valid.slice(0, int(rand, 0, valid.length - 1));
	if (way === 1) return valid.replace(/":-?\d[\d.e+-]*/, '":NaN');
	if (way === 2) return valid.replace(/":-?\d[\d.e+-]*/, '":-Infinity');
	if (way === 3) return valid.replace(/"/g, "'");
	if (way === 4) return valid.replace(/}$/, ',}');
	if (way === 5) return valid.replace(/"serial":"/, '"serial":"\u0001');
	if (way === 6) return `/* comment */${valid}`;
	return pick(rand, ['', 'null null', 'undefined', '{', '[', '{"lot":', '\u0000', '\ufeff{}x']);
}

/**
 * One hostile results request from `valid` (a body the server would accept from the station):
 * mostly schema-invalid bodies (a killer plus noise), then malformed JSON, wrong content types, bad
 * keys and bad credentials around an otherwise valid body.
 */
export function hostileResult(rand: Rand, valid: Obj, schema: z.ZodType): Hostile {
	const r = rand();
	const validText = JSON.stringify(valid);
	const key = `fuzz-${Math.floor(rand() * 2 ** 48).toString(36)}`;
	const okType = pick(rand, GOOD_TYPES);
	if (r < 0.72) {
		const o = structuredClone(valid);
		const raws: string[] = [];
		const [name, killer] = pick(rand, Object.entries(RESULT_KILLERS));
		// Noise first, on the valid structure; the killer last, so nothing undoes it.
		const labels: string[] = [];
		for (let i = int(rand, 0, 3); i > 0; i--) labels.push(pick(rand, RESULT_NOISE)(o, rand, raws));
		labels.unshift(killer(o, rand, raws));
		return { label: `${name}: ${labels.join(', ')}`, auth: 'station', contentType: okType, idempotencyKey: key, body: render(o, raws), because: 'schema' };
	}
	if (r < 0.84) return { label: 'malformed JSON', auth: 'station', contentType: okType, idempotencyKey: key, body: malformed(validText, rand), because: 'not-json' };
	if (r < 0.9) {
		const type = pick(rand, [...BAD_TYPES, null]);
		return { label: `content type ${type ?? 'missing'}`, auth: 'station', contentType: type, idempotencyKey: key, body: validText, because: 'content-type' };
	}
	if (r < 0.95) {
		const bad = pick(rand, [...BAD_KEYS, null]);
		return { label: `Idempotency-Key ${bad === null ? 'missing' : JSON.stringify(bad.slice(0, 20))}`, auth: 'station', contentType: okType, idempotencyKey: bad, body: validText, because: 'key' };
	}
	const auth = pick(rand, ['none', 'bad-token', 'malformed', 'cookie'] as const);
	return { label: `credentials: ${auth}`, auth, contentType: okType, idempotencyKey: key, body: validText, because: 'auth' };
}

/** True when the request must be refused for the reason it was generated for. */
export function certainRefusal(h: Hostile, schema: z.ZodType): boolean {
	if (h.because === 'auth') return h.auth !== 'station';
	if (h.because === 'content-type') return h.contentType === null || !/^application\/([\w.+-]+\+)?json\b/i.test(h.contentType);
	if (h.because === 'key') return h.idempotencyKey === null || !/^[\x21-\x7e]{1,255}$/.test(h.idempotencyKey);
	let value: unknown;
	try {
		value = JSON.parse(h.body);
	} catch {
		return true;
	}
	if (h.because === 'not-json') return false;
	return !schema.safeParse(value).success;
}

/** Mutations of a small JSON body for the other endpoints: each checked against `schema` by the caller. */
export function hostileSmallBody(rand: Rand, valid: Obj): string {
	const o = structuredClone(valid);
	const keys = Object.keys(o);
	const way = int(rand, 0, 6);
	if (way === 0) return malformed(JSON.stringify(o), rand);
	if (way === 1) return pick(rand, ['[]', '"closed"', '42', 'null', 'true', deepText(int(rand, 100, 20_000), 'array')]);
	const k = pick(rand, keys);
	if (way === 2) delete o[k];
	else if (way === 3) o[k] = pick(rand, [...NASTY_STRINGS, ...NUMBER_LIKE, 'x'.repeat(int(rand, 2001, 20_000))] as Json[]);
	else if (way === 4) o[k] = pick(rand, [1e308, -1e308, 5e-324, -5e-324, null, true, [], {}, [o[k] ?? null]] as Json[]);
	else if (way === 5) o[k] = pick(rand, ['', ' ', 'ab', '  ab  ']);
	else {
		const raws: string[] = [];
		o[k] = addRaw(raws, deepText(int(rand, 100, 20_000), rand() < 0.5 ? 'array' : 'object'));
		return render(o, raws);
	}
	if (rand() < 0.3) o[pick(rand, ['extra', '__proto__', 'status2'])] = pick(rand, NASTY_STRINGS);
	return JSON.stringify(o);
}
