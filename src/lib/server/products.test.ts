import { describe, expect, test } from 'vitest';
import { canonicalJson } from './products';

// PostgreSQL stores jsonb objects with keys reordered (shorter keys first; PostgreSQL manual,
// "JSON Types": jsonb "does not preserve the order of object keys"), so plans compare by content.
describe('canonicalJson', () => {
	test('key order does not matter, at any depth', () => {
		expect(canonicalJson({ points: [{ maxF: 2, biasV: 1, minF: 1 }], q: { min: 1, biasV: 4 } })).toBe(
			canonicalJson({ q: { biasV: 4, min: 1 }, points: [{ biasV: 1, minF: 1, maxF: 2 }] })
		);
	});
	test('array order and values do matter', () => {
		expect(canonicalJson({ points: [{ biasV: 1 }, { biasV: 2 }] })).not.toBe(canonicalJson({ points: [{ biasV: 2 }, { biasV: 1 }] }));
		expect(canonicalJson({ a: 1 })).not.toBe(canonicalJson({ a: 1.0000001 }));
	});
});
