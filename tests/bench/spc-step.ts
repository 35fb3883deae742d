/**
 * Benchmark (not a test): cost of one rule-engine `step` with every rule enabled, including
 * the JSON round trip the server does to store the state. Run: npx tsx tests/bench/spc-step.ts (or npm run bench)
 * The cost must not grow with the history, so it is measured after 1e3 and after 1e5 points.
 */
import { cusumParameters, ewmaParameters } from '../../src/lib/spc/charts';
import { initialRuleState, step } from '../../src/lib/spc/rules';
import { ALL_RULE_IDS, type ChartRuleLimits, type RuleState } from '../../src/lib/spc/types';

const ewma = ewmaParameters({ target: 0, sigma: 1 });
const cusum = cusumParameters({ target: 0, sigma: 1 });
if (!ewma.ok || !cusum.ok) throw new Error('bad benchmark parameters');
const limits: ChartRuleLimits = {
	shewhart: { centerLine: 0, sigma: 1, upperControlLimit: 3, lowerControlLimit: -3 },
	ewma: ewma.value,
	cusum: cusum.value
};
const rules = [...ALL_RULE_IDS];

function run(points: number): { microsPerStep: number; stateBytes: number } {
	let stored = JSON.stringify(initialRuleState());
	let seed = 12345;
	const start = performance.now();
	for (let i = 0; i < points; i++) {
		seed = (seed * 1103515245 + 12345) % 2147483648;
		const x = (seed / 2147483648 - 0.5) * 5;
		const r = step(JSON.parse(stored) as RuleState, limits, x, rules);
		if (!r.ok) throw new Error(r.error.message);
		stored = JSON.stringify(r.value.state);
	}
	return { microsPerStep: ((performance.now() - start) * 1000) / points, stateBytes: stored.length };
}

run(2000); // warm-up
for (const n of [1_000, 100_000]) {
	const r = run(n);
	console.log(`${n} points: ${r.microsPerStep.toFixed(2)} us per step, stored state ${r.stateBytes} bytes`);
}
