import argon2 from 'argon2';
import { describe, expect, test } from 'vitest';
import { ARGON2_OPTIONS, hashPassword, verifyPassword } from './passwords';

describe('password storage', () => {
	test('the argon2 binding reproduces the Argon2id test vector of RFC 9106 §5.3', async () => {
		// RFC 9106 (Argon2), section 5.3, Argon2id: password 32 × 0x01, salt 16 × 0x02,
		// secret 8 × 0x03, associated data 12 × 0x04, m = 32 KiB, t = 3, p = 4, tag 32 bytes.
		// Tag as printed in the RFC (recalled from memory, confirmed by this check passing).
		const tag = await argon2.hash(Buffer.alloc(32, 1), {
			type: argon2.argon2id,
			salt: Buffer.alloc(16, 2),
			secret: Buffer.alloc(8, 3),
			associatedData: Buffer.alloc(12, 4),
			memoryCost: 32,
			timeCost: 3,
			parallelism: 4,
			hashLength: 32,
			raw: true
		});
		expect(tag.toString('hex')).toBe('0d640df58d78766c08c037a34a8b53c9d01ef0452d75b65eb52520e96b01e659');
	});

	test('hashes are argon2id with the OWASP cheat sheet parameters (m=19456 KiB, t=2, p=1)', async () => {
		// OWASP Password Storage Cheat Sheet, Argon2id: "m=19456 (19 MiB), t=2, p=1".
		const hash = await hashPassword('a long enough passphrase');
		expect(hash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
		expect(ARGON2_OPTIONS.memoryCost).toBe(19456);
	});

	test('a password verifies against its own hash only', async () => {
		const hash = await hashPassword('correct horse battery staple');
		expect(await verifyPassword(hash, 'correct horse battery staple')).toBe(true);
		expect(await verifyPassword(hash, 'correct horse battery stapl')).toBe(false);
		expect(await verifyPassword(hash, '')).toBe(false);
	});

	test('two hashes of one password differ (random salt)', async () => {
		const [a, b] = await Promise.all([hashPassword('same password here'), hashPassword('same password here')]);
		expect(a).not.toBe(b);
	});

	test.each(['', 'not-a-hash', '$argon2id$v=19$m=19456,t=2,p=1$broken'])('a malformed stored hash %j verifies as false', async (bad) => {
		expect(await verifyPassword(bad, 'anything')).toBe(false);
	});
});
