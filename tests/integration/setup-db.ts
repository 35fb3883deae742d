// Integration tests share one throwaway database (DATABASE_URL from src/ops/test.mjs), migrated once.
import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll } from 'vitest';
import { closeDb, db } from '$lib/server/db';
import { migrate } from '$lib/server/db/migrate';

export function useDatabase() {
	beforeAll(async () => {
		await migrate(db());
	});
	afterAll(async () => {
		await closeDb();
	});
}

/** A unique e-mail per call, so test files never collide on the shared database. */
export function uniqueEmail(prefix: string): string {
	return `${prefix}.${randomBytes(4).toString('hex')}@test.example`;
}

export function adminUrl(): string {
	const url = process.env.BIASLINE_TEST_ADMIN_URL;
	if (!url) throw new Error('BIASLINE_TEST_ADMIN_URL is not set: run the tests with npm test');
	return url;
}
