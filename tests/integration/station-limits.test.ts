import { describe, expect, test } from 'vitest';
import { db } from '$lib/server/db';
import { STATION_LIMITS, stationOverLimit } from '$lib/server/ratelimit';
import { useDatabase } from './setup-db';

useDatabase();

describe('station rate limit', () => {
	test(`the ${STATION_LIMITS.perWindow + 1}th request in a window is refused with the seconds to wait`, async () => {
		const id = 900_000 + Math.floor(Math.random() * 1000);
		// Fill the station's window to the limit directly, then ask for one more.
		await db().query('INSERT INTO rate_limits (key, window_start, count) VALUES (:key, now(), :n) ON CONFLICT (key) DO UPDATE SET count = :n, window_start = now()', {
			replacements: { key: `station:${id}`, n: STATION_LIMITS.perWindow - 1 }
		});
		expect(await stationOverLimit(id)).toBeNull();
		const wait = await stationOverLimit(id);
		expect(wait).not.toBeNull();
		expect(wait).toBeGreaterThanOrEqual(1);
		expect(wait).toBeLessThanOrEqual(STATION_LIMITS.windowS);
	});

	test('another station has a budget of its own', async () => {
		expect(await stationOverLimit(800_000 + Math.floor(Math.random() * 1000))).toBeNull();
	});
});
