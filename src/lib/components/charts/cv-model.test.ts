import { describe, expect, test } from 'vitest';
import { axisTicks, curvePoints, cvExtent, linearTicks, logTicks, toAxis } from './cv-model';

describe('C–V plot model', () => {
	test('log axes drop values at or below zero (0 V has no logarithm)', () => {
		expect(toAxis(0, 'log')).toBeNull();
		expect(toAxis(100, 'log')).toBe(2);
		expect(toAxis(0, 'linear')).toBe(0);
		const c = { id: 'a', biasV: [0, 1, 10], capacitancePf: [40, 30, null], pass: true };
		expect(curvePoints(c, 'log')).toEqual([{ x: 0, y: Math.log10(30) }]);
		expect(curvePoints(c, 'linear')).toEqual([{ x: 0, y: 40 }, { x: 1, y: 30 }]);
	});
	test('extent covers curves and spec windows with 5 % padding', () => {
		const e = cvExtent([{ id: 'a', biasV: [1, 25], capacitancePf: [30, 3], pass: true }], [{ biasV: 25, lowPf: 2.2, highPf: 2.8 }], 'linear');
		expect(e?.x[0]).toBeCloseTo(1 - 1.2, 9);
		expect(e?.y[0]).toBeCloseTo(2.2 - 0.05 * 27.8, 9);
		expect(cvExtent([], [], 'linear')).toBeNull();
	});
	test('ticks: 1-2-5 steps on linear axes, 1-2-5 per decade on log axes', () => {
		expect(linearTicks(0, 10, 5)).toEqual([0, 2, 4, 6, 8, 10]);
		expect(linearTicks(0.3, 0.95, 3)).toEqual([0.4, 0.6, 0.8]);
		expect(logTicks(0, 2)).toEqual([1, 2, 5, 10, 20, 50, 100]);
		expect(axisTicks([0, 1], 'log').map((t) => t.value)).toEqual([1, 2, 5, 10]);
		expect(linearTicks(5, 5)).toEqual([5]);
	});
});
