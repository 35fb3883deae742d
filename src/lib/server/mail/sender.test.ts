import { describe, expect, test } from 'vitest';
import { retryDelayMs } from './sender';

describe('retry backoff', () => {
	// Doubling from 30 s with a 1 h cap: common practice for a client retrying a service. (We only
	// hand mail to the site's relay, which then keeps its own RFC 5321 4.5.4.1 retry schedule.)
	test.each([
		[1, 30_000],
		[2, 60_000],
		[3, 120_000],
		[7, 1_920_000],
		[8, 3_600_000],
		[30, 3_600_000]
	])('after %i failures wait %i ms', (attempts, ms) => expect(retryDelayMs(attempts)).toBe(ms));
});
