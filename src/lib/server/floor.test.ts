import { describe, expect, test } from 'vitest';
import { OFFLINE_AFTER_S, TESTING_WITHIN_S, tileState } from './floor';

// The product's own documented thresholds (README, "The floor"): testing within 60 s of the last
// post, idle up to 10 min, then offline; a due calibration shows on an active station.
describe('floor tile state', () => {
	test.each([
		[null, false, 'offline'],
		[0, false, 'testing'],
		[TESTING_WITHIN_S, false, 'testing'],
		[TESTING_WITHIN_S + 1, false, 'idle'],
		[OFFLINE_AFTER_S, false, 'idle'],
		[OFFLINE_AFTER_S + 1, false, 'offline'],
		[5, true, 'calibration-due'],
		[OFFLINE_AFTER_S + 1, true, 'offline'],
		[null, true, 'offline']
	] as const)('idle %s s, calibration due %s → %s', (idle, due, state) => {
		expect(tileState(idle, due)).toBe(state);
	});
});
