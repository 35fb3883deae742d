// Password storage: argon2id with the OWASP Password Storage Cheat Sheet's first recommended
// configuration (m = 19 MiB, t = 2, p = 1).
import argon2 from 'argon2';

export const ARGON2_OPTIONS = {
	type: argon2.argon2id,
	memoryCost: 19_456, // KiB = 19 MiB
	timeCost: 2,
	parallelism: 1
} as const;

/** Hashes a password; the result is a PHC string that carries its own salt and parameters. */
export async function hashPassword(password: string): Promise<string> {
	return argon2.hash(password, ARGON2_OPTIONS);
}

/** True when the password matches the stored hash; false for a malformed hash. */
export async function verifyPassword(hash: string, password: string): Promise<boolean> {
	try {
		return await argon2.verify(hash, password);
	} catch {
		return false;
	}
}

// A fixed hash to verify against when the e-mail is unknown, so both answers take as long.
let dummy: Promise<string> | null = null;
export function dummyHash(): Promise<string> {
	dummy ??= hashPassword('not-a-real-password-' + 'x'.repeat(16));
	return dummy;
}
