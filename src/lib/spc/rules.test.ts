import { describe, expect, test } from 'vitest';
import { prng } from '$lib/prng';
import { cusumParameters, ewmaParameters } from './charts';
import { evaluateRules, initialRuleState, RULE_WINDOW_POINTS, step } from './rules';
import { ALL_RULE_IDS, type ChartRuleLimits, type RuleId, type RuleState, type SpcResult, type Violation } from './types';

// Rule definitions: tests/reference/spc/rules.md (copied from shared/reference/spc/rules.md):
// WE1-WE4 after Western Electric Co., Statistical Quality Control Handbook, 1956; N1-N8 after
// L. S. Nelson, J. Quality Technology 16(4), 1984. Series are hand-made with CL = 0, sigma = 1,
// UCL = 3, LCL = -3, so a value is its own distance from CL in sigmas. Cases marked
// "project choice" test the boundary/tie behaviour documented in rules.ts, which the
// publications do not settle (rules.md, disagreement 5).

function unwrap<T>(r: SpcResult<T>): T {
	if (!r.ok) throw new Error(`${r.error.code}: ${r.error.message}`);
	return r.value;
}

const limits: ChartRuleLimits = {
	shewhart: { centerLine: 0, sigma: 1, upperControlLimit: 3, lowerControlLimit: -3 }
};

function firing(values: readonly number[], rule: RuleId, l: ChartRuleLimits = limits): number[] {
	return unwrap(evaluateRules(values, l, [rule])).map((v) => v.index);
}

function firingByStep(values: readonly number[], rule: RuleId, l: ChartRuleLimits = limits): number[] {
	let state = initialRuleState();
	const out: number[] = [];
	for (const x of values) {
		const r = unwrap(step(state, l, x, [rule]));
		state = r.state;
		out.push(...r.violations.map((v) => v.index));
	}
	return out;
}

const rep = (value: number, count: number) => Array.from({ length: count }, () => value);
const alternate = (a: number, b: number, count: number) => Array.from({ length: count }, (_, i) => (i % 2 === 0 ? a : b));

type Case = readonly [label: string, rule: RuleId, values: readonly number[], expected: readonly number[]];

const cases: Case[] = [
	// WE1 / N1: one point beyond the 3-sigma limits.
	['WE1 above UCL', 'WE1', [0, 3.5, 0], [1]],
	['WE1 below LCL', 'WE1', [-3.01], [0]],
	['WE1 exactly on UCL and LCL does not fire (project choice)', 'WE1', [3, -3], []],
	['N1 same as WE1', 'N1', [0, -4, 0, 4], [1, 3]],
	// WE2 / N5: 2 of 3 beyond 2 sigma, same side.
	['WE2 2 of 3 above 2 sigma, gap in the middle', 'WE2', [2.5, 0, 2.1], [2]],
	['WE2 fires on the second qualifying point; a third ordinary point does not re-fire (project choice)', 'WE2', [0, 2.5, 2.1, 0], [2]],
	['WE2 two points on opposite sides do not fire (rules.md: same side)', 'WE2', [2.5, -2.5, 0], []],
	['WE2 a point exactly at 2 sigma is not beyond it (project choice)', 'WE2', [2, 2.5, 0], []],
	['WE2 a point beyond the limit counts as zone A or beyond (rules.md reading 3)', 'WE2', [3.5, 2.5], [1]],
	['WE2 first two points of a chart already fire (truncated window, project choice)', 'WE2', [-2.2, -2.9], [1]],
	['WE2 2 of 4 spread too far apart do not fire', 'WE2', [2.5, 0, 0, 2.5], []],
	['N5 same as WE2', 'N5', [0, -2.5, 1, -2.1], [3]],
	// WE3 / N6: 4 of 5 beyond 1 sigma, same side.
	['WE3 4 of 5 above 1 sigma', 'WE3', [1.5, 1.5, 0, 1.5, 1.5], [4]],
	['WE3 3 of 5 do not fire', 'WE3', [1.5, 0, 1.5, 0, 1.5], []],
	['WE3 a point exactly at 1 sigma does not count (project choice)', 'WE3', [1.5, 1, 1.5, 1.5, 0, 1.5], []],
	['WE3 mixed sides do not fire', 'WE3', [1.5, -1.5, 1.5, -1.5, 1.5], []],
	['N6 below CL', 'N6', [0, -1.2, -1.2, -1.2, 0.5, -1.2], [5]],
	// WE4: 8 in a row on one side; N2: 9.
	['WE4 8 points above CL', 'WE4', [-1, ...rep(0.5, 8)], [8]],
	['WE4 7 points do not fire', 'WE4', rep(0.5, 7), []],
	['WE4 keeps firing while the run lasts (project choice)', 'WE4', rep(-0.2, 10), [7, 8, 9]],
	['WE4 a point exactly on CL breaks the run (project choice)', 'WE4', [...rep(0.5, 4), 0, ...rep(0.5, 4)], []],
	['N2 9 points below CL', 'N2', rep(-0.1, 9), [8]],
	['N2 8 points do not fire', 'N2', rep(-0.1, 8), []],
	// N3: 6 points steadily increasing or decreasing.
	['N3 6 increasing', 'N3', [0.1, 0.2, 0.3, 0.4, 0.5, 0.6], [5]],
	['N3 6 decreasing', 'N3', [2, 1.5, 1, 0.5, 0, -0.5], [5]],
	['N3 5 increasing do not fire', 'N3', [0.1, 0.2, 0.3, 0.4, 0.5], []],
	['N3 an equal neighbour breaks the trend (project choice)', 'N3', [0.1, 0.2, 0.3, 0.3, 0.4, 0.5, 0.6], []],
	// N4: 14 points alternating.
	['N4 14 alternating', 'N4', alternate(0.5, -0.5, 14), [13]],
	['N4 13 alternating do not fire', 'N4', alternate(0.5, -0.5, 13), []],
	['N4 a zero difference breaks the alternation (project choice)', 'N4', [...alternate(0.5, -0.5, 7), 0.5, ...alternate(-0.5, 0.5, 7)], []],
	['N4 15 alternating fire twice', 'N4', alternate(1, 2, 15), [13, 14]],
	// N7: 15 points within 1 sigma.
	['N7 15 points in zone C including points exactly on 1 sigma and on CL (project choice)', 'N7', [1, -1, 0, ...rep(0.3, 12)], [14]],
	['N7 one point beyond 1 sigma breaks it', 'N7', [...rep(0.3, 7), 1.01, ...rep(0.3, 7)], []],
	['N7 14 points do not fire', 'N7', rep(0.3, 14), []],
	// N8: 8 points beyond 1 sigma, both sides.
	['N8 8 points alternating beyond 1 sigma', 'N8', alternate(1.5, -1.5, 8), [7]],
	['N8 8 points beyond 1 sigma all on one side do not fire (project choice)', 'N8', rep(1.5, 8), []],
	['N8 a point exactly at 1 sigma is in zone C and breaks it (project choice)', 'N8', [...alternate(1.5, -1.5, 7), 1], []],
	['N8 7 points do not fire', 'N8', alternate(1.5, -1.5, 7), []]
];

describe('zone rules on hand-made series (batch evaluator)', () => {
	test.each(cases)('%s', (_label, rule, values, expected) => {
		expect(firing(values, rule)).toEqual(expected);
	});
});

describe('zone rules on hand-made series (incremental step)', () => {
	test.each(cases)('%s', (_label, rule, values, expected) => {
		expect(firingByStep(values, rule)).toEqual(expected);
	});
});

describe('EWMA and CUSUM signals as violations', () => {
	const ewma = unwrap(ewmaParameters({ target: 0, sigma: 1, lambda: 0.2, limitWidthSigma: 3 }));
	const cusum = unwrap(cusumParameters({ target: 0, sigma: 1, referenceK: 0.5, decisionH: 5 }));
	const withBoth: ChartRuleLimits = { ...limits, ewma, cusum };
	// Independent hand computation: constant input 1.5 gives z_i = 1.5 (1 - 0.8^i) and the
	// limit 3 sqrt(0.2/1.8 (1 - 0.64^i)), both evaluated in the test below.
	test('EWMA fires where the explicit formula first exceeds the exact limit', () => {
		const values = rep(1.5, 12);
		const expected: number[] = [];
		values.forEach((_, k) => {
			const i = k + 1;
			const z = 1.5 * (1 - 0.8 ** i);
			const ucl = 3 * Math.sqrt((0.2 / 1.8) * (1 - 0.64 ** i));
			if (z > ucl) expected.push(k);
		});
		expect(expected.length).toBeGreaterThan(0);
		expect(firing(values, 'EWMA', withBoth)).toEqual(expected);
	});
	// C+ gains 1.5 - 0.5 = 1 per point; it passes H = 5 at the 6th point (C+ = 6), index 5.
	test('CUSUM+ fires once C+ > 5; CUSUM- mirrors it', () => {
		expect(firing(rep(1.5, 7), 'CUSUM+', withBoth)).toEqual([5, 6]);
		expect(firing(rep(-1.5, 7), 'CUSUM-', withBoth)).toEqual([5, 6]);
		expect(firing(rep(1.5, 7), 'CUSUM-', withBoth)).toEqual([]);
	});
	test('enabling EWMA or CUSUM without their parameters is a typed error', () => {
		const r = evaluateRules([1], limits, ['EWMA']);
		expect(r.ok ? null : r.error.code).toBe('INVALID_PARAMETER');
		const s = step(initialRuleState(), limits, 1, ['CUSUM+']);
		expect(s.ok ? null : s.error.code).toBe('INVALID_PARAMETER');
	});
});

describe('violations name the rule, the index and a description', () => {
	test('WE1 violation content', () => {
		const v = unwrap(evaluateRules([0, 4], limits, ['WE1']));
		expect(v).toHaveLength(1);
		expect(v[0]?.ruleId).toBe('WE1');
		expect(v[0]?.index).toBe(1);
		expect(v[0]?.description).toMatch(/WE1.*above.*point 1/);
	});
	test('only enabled rules are reported, sorted by index then rule order', () => {
		const v = unwrap(evaluateRules([4, 4], limits, ['WE2', 'WE1']));
		expect(v.map((x) => `${x.index}:${x.ruleId}`)).toEqual(['0:WE1', '1:WE1', '1:WE2']);
		expect(unwrap(evaluateRules([4, 4], limits, []))).toEqual([]);
	});
});

function gaussian(rand: () => number): number {
	const u = Math.max(rand(), 1e-12);
	return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
}

/** Random series with shifts, trends, oscillation, hugging and exact ties mixed in. */
function randomSeries(seed: number, length: number): number[] {
	const rand = prng(seed);
	const out: number[] = [];
	let mode = 0;
	for (let i = 0; i < length; i++) {
		if (rand() < 0.05) mode = Math.floor(rand() * 6);
		const noise = gaussian(rand);
		let x: number;
		if (mode === 1) x = 1.2 + noise * 0.6;
		else if (mode === 2) x = (i % 20) * 0.15 - 1.5;
		else if (mode === 3) x = (i % 2 === 0 ? 1 : -1) * (1.2 + Math.abs(noise) * 0.5);
		else if (mode === 4) x = noise * 0.3;
		else if (mode === 5) x = [0, 1, -1, 2, -2, 3, -3][Math.floor(rand() * 7)] ?? 0;
		else x = noise;
		out.push(x);
	}
	return out;
}

describe('batch evaluator and incremental step agree on random series', () => {
	const ewma = unwrap(ewmaParameters({ target: 0, sigma: 1 }));
	const cusum = unwrap(cusumParameters({ target: 0, sigma: 1 }));
	const l: ChartRuleLimits = { ...limits, ewma, cusum };
	const all: RuleId[] = [...ALL_RULE_IDS];
	test.each(Array.from({ length: 40 }, (_, i) => [i + 1]))('seed %i: identical violations, bounded JSON state', (seed) => {
		const values = randomSeries(seed, 400);
		const batch = unwrap(evaluateRules(values, l, all));
		let state: RuleState = initialRuleState();
		const incremental: Violation[] = [];
		for (const x of values) {
			const r = unwrap(step(state, l, x, all));
			// The server stores the state as JSON between posts: round-trip it every time.
			state = JSON.parse(JSON.stringify(r.state)) as RuleState;
			expect(state.recentValues.length).toBeLessThanOrEqual(RULE_WINDOW_POINTS);
			incremental.push(...r.violations);
		}
		expect(incremental).toEqual(batch);
		expect(state.pointCount).toBe(values.length);
	});
	test('the random series exercise every rule at least once', () => {
		const seen = new Set<RuleId>();
		for (let seed = 1; seed <= 40; seed++) {
			for (const v of unwrap(evaluateRules(randomSeries(seed, 400), l, all))) seen.add(v.ruleId);
		}
		expect([...seen].sort()).toEqual([...all].sort());
	});
});

describe('bad input to the rule engine gives typed errors', () => {
	test.each([
		['NaN value', [0, Number.NaN], 'NON_FINITE_VALUE'],
		['+Infinity value', [Number.POSITIVE_INFINITY], 'NON_FINITE_VALUE'],
		['-Infinity value', [Number.NEGATIVE_INFINITY], 'NON_FINITE_VALUE']
	])('batch: %s', (_label, values, code) => {
		const r = evaluateRules(values, limits, ['WE1']);
		expect(r.ok ? null : r.error.code).toBe(code);
	});
	test('batch: empty series gives no violations', () => {
		expect(unwrap(evaluateRules([], limits, [...ALL_RULE_IDS].filter((id) => !id.startsWith('EWMA') && !id.startsWith('CUSUM'))))).toEqual([]);
	});
	test.each([
		['zero sigma', { shewhart: { centerLine: 0, sigma: 0, upperControlLimit: 0, lowerControlLimit: 0 } }, 'ZERO_SIGMA'],
		['NaN centre line', { shewhart: { centerLine: Number.NaN, sigma: 1, upperControlLimit: 3, lowerControlLimit: -3 } }, 'NON_FINITE_VALUE'],
		['LCL above CL', { shewhart: { centerLine: 0, sigma: 1, upperControlLimit: 3, lowerControlLimit: 1 } }, 'INVALID_PARAMETER']
	])('limits: %s', (_label, l, code) => {
		const r = step(initialRuleState(), l, 0, ['WE1']);
		expect(r.ok ? null : r.error.code).toBe(code);
	});
	test('step: NaN value is rejected and the state is left to the caller', () => {
		const r = step(initialRuleState(), limits, Number.NaN, ['WE1']);
		expect(r.ok ? null : r.error.code).toBe('NON_FINITE_VALUE');
	});
	test.each([
		['negative count', { ...initialRuleState(), pointCount: -1 }],
		['window longer than the count', { ...initialRuleState(), pointCount: 1, recentValues: [1, 2] }],
		['NaN in the window', { ...initialRuleState(), pointCount: 1, recentValues: [Number.NaN] }],
		['negative CUSUM', { ...initialRuleState(), cusumUpper: -1 }],
		['non-finite EWMA', { ...initialRuleState(), ewmaValue: Number.POSITIVE_INFINITY }]
	])('step: malformed state (%s) is INVALID_STATE', (_label, state) => {
		const r = step(state, limits, 0, ['WE1']);
		expect(r.ok ? null : r.error.code).toBe('INVALID_STATE');
	});
	test('unknown rule id is a typed error', () => {
		const r = evaluateRules([0], limits, ['WE9' as RuleId]);
		expect(r.ok ? null : r.error.code).toBe('INVALID_PARAMETER');
	});
});
