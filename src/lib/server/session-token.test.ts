import { SignJWT, UnsecuredJWT } from 'jose';
import { describe, expect, test } from 'vitest';
import { readSessionToken, signSessionToken } from './auth';

// Token rules from RFC 7519 (JWT) §4.1.4: a token whose "exp" is in the past must be rejected;
// RFC 7515 (JWS): any change to header or payload invalidates the HS256 signature.
const KEY = 'k'.repeat(43);
const OTHER = 'o'.repeat(43);
const inOneHour = () => new Date(Date.now() + 3600_000);

describe('session tokens', () => {
	test('a fresh token gives back its session id', async () => {
		const token = await signSessionToken('sid-123', inOneHour(), KEY);
		expect(await readSessionToken(token, KEY)).toBe('sid-123');
	});

	test('an expired token is refused (RFC 7519 §4.1.4)', async () => {
		const token = await signSessionToken('sid-123', new Date(Date.now() - 60_000), KEY);
		expect(await readSessionToken(token, KEY)).toBeNull();
	});

	test('a token signed with another key is refused', async () => {
		const token = await signSessionToken('sid-123', inOneHour(), OTHER);
		expect(await readSessionToken(token, KEY)).toBeNull();
	});

	test('a tampered payload is refused (RFC 7515 signature)', async () => {
		const token = await signSessionToken('sid-123', inOneHour(), KEY);
		const [h, , s] = token.split('.');
		const forged = Buffer.from(JSON.stringify({ sid: 'sid-999', exp: Math.floor(Date.now() / 1000) + 3600, iss: 'biasline' })).toString(
			'base64url'
		);
		expect(await readSessionToken(`${h}.${forged}.${s}`, KEY)).toBeNull();
	});

	test('an unsigned ("alg": "none") token is refused', async () => {
		const token = new UnsecuredJWT({ sid: 'sid-123' }).setIssuer('biasline').setExpirationTime('1h').encode();
		expect(await readSessionToken(token, KEY)).toBeNull();
	});

	test('a token from another issuer is refused', async () => {
		const token = await new SignJWT({ sid: 'sid-123' })
			.setProtectedHeader({ alg: 'HS256' })
			.setIssuer('someone-else')
			.setExpirationTime('1h')
			.sign(new TextEncoder().encode(KEY));
		expect(await readSessionToken(token, KEY)).toBeNull();
	});

	test.each(['', 'garbage', 'a.b.c'])('malformed token %j is refused', async (bad) => {
		expect(await readSessionToken(bad, KEY)).toBeNull();
	});
});
