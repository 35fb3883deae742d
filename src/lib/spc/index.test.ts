import { readFileSync } from 'node:fs';
import { describe, expect, test } from 'vitest';
import { ALL_RULE_IDS, ZONE_RULE_IDS, computeBaseline, evaluateRules, initialRuleState, step, type RuleState, type Violation } from './index';

// Rule labels must be exactly those of tests/reference/spc/rules.md (copied from
// shared/reference/spc/rules.md): WE1-WE4 (Western Electric, 1956) and N1-N8 (Nelson, 1984).
describe('public surface', () => {
	test('zone rule ids are the labels used in rules.md', () => {
		const md = readFileSync(new URL('../../../tests/reference/spc/rules.md', import.meta.url), 'utf8');
		const labels = [...md.matchAll(/^\| (WE\d|N\d) \|/gm)].map((m) => m[1]);
		expect([...ZONE_RULE_IDS].sort()).toEqual([...new Set(labels)].sort());
		expect(ALL_RULE_IDS).toEqual([...ZONE_RULE_IDS, 'EWMA', 'CUSUM+', 'CUSUM-']);
	});

	// The production flow: the first 30 parts set the limits, every later part is stepped
	// through the rules with the state stored as JSON between posts. The stepped result must
	// equal the batch evaluation of the same later parts. Values: a fixed in-control pattern,
	// then a +2 sigma shift that WE1/WE2/EWMA/CUSUM+ must catch (hand-made fixture).
	test('baseline of 30, then stepping later parts, agrees with the batch evaluator', () => {
		const base = Array.from({ length: 30 }, (_, i) => 10 + ([0.3, -0.2, 0.1, -0.4, 0.2][i % 5] ?? 0));
		const later = [...base.slice(0, 10), ...Array.from({ length: 15 }, (_, i) => 11 + (i % 3) * 0.1)];
		const baseline = computeBaseline([...base, ...later]);
		expect(baseline.ok).toBe(true);
		if (!baseline.ok) return;
		const limits = baseline.value.limits;
		const rules = [...ALL_RULE_IDS];
		let stored = JSON.stringify(initialRuleState());
		const stepped: Violation[] = [];
		for (const x of later) {
			const r = step(JSON.parse(stored) as RuleState, limits, x, rules);
			expect(r.ok).toBe(true);
			if (!r.ok) return;
			stored = JSON.stringify(r.value.state);
			stepped.push(...r.value.violations);
		}
		const batch = evaluateRules(later, limits, rules);
		expect(batch.ok && batch.value).toEqual(stepped);
		const fired = new Set(stepped.map((v) => v.ruleId));
		for (const id of ['WE1', 'WE2', 'EWMA', 'CUSUM+'] as const) expect(fired.has(id)).toBe(true);
		expect(stepped.every((v) => v.index >= 10)).toBe(true);
	});
});
