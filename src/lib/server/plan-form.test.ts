import { describe, expect, test } from 'vitest';
import { alignPlan, parsePlanForm, parseStationForm, planToValues, readNumber, show, stationToValues } from './plan-form';
import { planDiff } from './setup-views';
import type { SpecPlan } from '$lib/measure/types';

const pF = 1e-12;

function form(points: [string, string, string][], extra: Partial<ReturnType<typeof planToValues>> = {}) {
	const v = planToValues(null, 0);
	v.points = points.map(([biasV, minPF, maxPF]) => ({ biasV, minPF, maxPF }));
	return { ...v, ...extra };
}

describe('plan form: typed text', () => {
	test.each([
		['24.6', 24.6],
		['24,6', 24.6],
		[' 1e-3 ', 0.001],
		['', undefined],
		['abc', Number.NaN],
		['1.2.3', Number.NaN]
	])('readNumber(%j)', (text, expected) => {
		const n = readNumber(text);
		if (expected === undefined) expect(n).toBeUndefined();
		else if (Number.isNaN(expected)) expect(n).toBeNaN();
		else expect(n).toBe(expected);
	});

	test('show() drops binary noise: 24.6 pF stored as 2.46e-11 F shows as 24.6', () => {
		expect(show(24.6 * pF, pF)).toBe('24.6');
		expect(show(undefined)).toBe('');
	});
});

describe('plan form → SI plan', () => {
	test('pF and nA become farads and amperes; empty rows and sections are left out', () => {
		const v = form([['1', '24.6', '28.4'], ['', '', ''], ['4', '', ''], ['25', '6.6', '7.7']]);
		v.leakage = { biasV: '25', maxNA: '10' };
		const r = parsePlanForm(v);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.plan.points).toEqual([{ biasV: 1, minF: 2.46e-11, maxF: 2.84e-11 }, { biasV: 4 }, { biasV: 25, minF: 6.6e-12, maxF: 7.7e-12 }]);
		expect(r.plan.leakage).toEqual({ biasV: 25, maxA: 1e-8 });
		expect(r.plan.ratio).toBeUndefined();
		expect(r.plan.bins).toBeUndefined();
	});

	test('min above max in row 3 and a non-number in row 5 are both reported beside their cells', () => {
		const v = form([['1', '', ''], ['2', '', ''], ['4', '20', '10'], ['8', '', ''], ['15', 'x1', '']]);
		const r = parsePlanForm(v);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors['points.2.minPF']).toBe('Min must be below Max');
		expect(r.errors['points.4.minPF']).toMatch(/Enter a number/);
	});

	test('an error is mapped to the typed row even with empty rows before it', () => {
		const v = form([['', '', ''], ['1', '', ''], ['1', '', '']]);
		const r = parsePlanForm(v);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors['points.2.biasV']).toBe('Same bias as row 2');
	});

	test('ratio at a bias that is not a point, leakage without bias, bad set size', () => {
		const v = form([['1', '', ''], ['25', '', '']]);
		v.ratio = { lowBiasV: '1', highBiasV: '20', min: '3', max: '' };
		v.leakage = { biasV: '', maxNA: '10' };
		v.matching = { setSize: '1', tolerancePct: '2' };
		const r = parsePlanForm(v);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors['ratio.highBiasV']).toBe('Use a bias from the table of points');
		expect(r.errors['leakage.biasV']).toBe('Enter a value');
		expect(r.errors['matching.setSize']).toBe('At least 2');
	});

	test('no points at all is one message above the table', () => {
		const r = parsePlanForm(form([['', '', '']]));
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.errors.points).toBe('Give at least one bias point');
	});
});

describe('saving an unchanged plan', () => {
	const stored: SpecPlan = JSON.parse('{"q":{"min":150,"biasV":4},"points":[{"maxF":2.8400000000000003e-11,"minF":2.46e-11,"biasV":1},{"biasV":4}]}');
	test('the plan read back from the form equals the stored one, key order and float noise included', () => {
		const r = parsePlanForm(planToValues(stored));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(JSON.stringify(alignPlan(r.plan, stored))).toBe(JSON.stringify(stored));
	});
	test('a changed limit stays changed', () => {
		const v = planToValues(stored);
		v.q.min = '160';
		const r = parsePlanForm(v);
		expect(r.ok && JSON.stringify(alignPlan(r.plan, stored)) !== JSON.stringify(stored)).toBe(true);
	});
});

describe('version diff', () => {
	test('points are matched by bias; only changed fields are listed', () => {
		const a: SpecPlan = { points: [{ biasV: 1, minF: 24 * pF, maxF: 28 * pF }, { biasV: 4 }], q: { biasV: 4, min: 150 } };
		const b: SpecPlan = { points: [{ biasV: 1, minF: 24 * pF, maxF: 29 * pF }, { biasV: 2 }, { biasV: 4 }], q: { biasV: 4, min: 150 } };
		expect(planDiff(a, b)).toEqual([
			{ field: 'C at 1 V', before: '24 – 28 pF', after: '24 – 29 pF' },
			{ field: 'C at 2 V', before: null, after: 'measured, not judged' }
		]);
	});
});

describe('station form', () => {
	test('µH, pF, nF become SI; "none" is no blocking capacitor', () => {
		const v = { ...stationToValues(null), name: 'A-09', inductanceUH: '100', strayPF: '3.2', blockingNF: 'none', arrangement: 'single' };
		const r = parseStationForm(v);
		expect(r.ok).toBe(true);
		if (r.ok) expect(r.station.fixture).toEqual({ inductanceH: 1e-4, strayF: 3.2e-12, blockingF: null, arrangement: 'single' });
	});
	test('missing and bad fields are reported by input name', () => {
		const r = parseStationForm({ ...stationToValues(null), name: '', inductanceUH: 'ten', blockingNF: '' });
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.errors.inductanceUH).toMatch(/number/);
		expect(r.errors.blockingNF).toBe('Enter a value');
		expect(r.errors.name).toBe('Enter a station name');
	});
});

describe('plan form: control-chart settings', () => {
	test('an empty form keeps the default rules as no choice and stores no spc block', () => {
		const r = parsePlanForm(form([['1', '20', '30'], ['4', '', '']]));
		expect(r.ok).toBe(true);
		if (r.ok) expect(r.plan.spc).toBeUndefined();
	});

	test('subgroup size, EWMA and CUSUM parameters and a chosen rule set are stored, and read back as typed', () => {
		const v = form([['1', '20', '30'], ['4', '', '']]);
		v.spc = { ...v.spc, subgroupSize: '4', pChartParts: '100', ewmaLambda: '0,1', ewmaLimitWidthSigma: '2.7', cusumReferenceK: '0.5', cusumDecisionH: '4', rules: ['WE1', 'WE2', 'N3', 'CUSUM+'] };
		const r = parsePlanForm(v);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.plan.spc).toEqual({ subgroupSize: 4, pChartParts: 100, ewmaLambda: 0.1, ewmaLimitWidthSigma: 2.7, cusumReferenceK: 0.5, cusumDecisionH: 4, rules: ['WE1', 'WE2', 'N3', 'CUSUM+'] });
		const back = planToValues(r.plan);
		expect(back.spc).toMatchObject({ subgroupSize: '4', ewmaLambda: '0.1', rules: ['WE1', 'WE2', 'N3', 'CUSUM+'] });
	});

	test('a plan set through the API keeps its rules through an edit in the form (nothing silently dropped)', () => {
		const plan: SpecPlan = { points: [{ biasV: 1, minF: 20 * pF, maxF: 30 * pF }, { biasV: 4 }], spc: { baselineParts: 50, rules: ['WE1', 'N2'], subgroupSize: 3 } };
		const r = parsePlanForm(planToValues(plan));
		expect(r.ok).toBe(true);
		if (r.ok) expect(r.plan.spc).toEqual({ baselineParts: 50, rules: ['WE1', 'N2'], subgroupSize: 3 });
	});

	test('out-of-range settings are reported beside their fields', () => {
		const v = form([['1', '20', '30'], ['4', '', '']]);
		v.spc = { ...v.spc, subgroupSize: '1', ewmaLambda: '1.5', cusumDecisionH: 'x' };
		const r = parsePlanForm(v);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(Object.keys(r.errors)).toEqual(expect.arrayContaining(['spc.subgroupSize', 'spc.ewmaLambda', 'spc.cusumDecisionH']));
	});

	test('the posted form: ticked boxes are the rules; a form without the boxes keeps the defaults', async () => {
		const { planValuesFromForm } = await import('./plan-form');
		const ticked = planValuesFromForm({ 'points.0.biasV': '1', 'spc.rules': 'ticked', 'spc.rule.WE1': 'on', 'spc.rule.N7': 'on' });
		expect(ticked.spc.rules).toEqual(['WE1', 'N7']);
		const none = planValuesFromForm({ 'points.0.biasV': '1', 'spc.rules': 'ticked' });
		expect(none.spc.rules).toEqual([]);
		const legacy = planValuesFromForm({ 'points.0.biasV': '1' });
		expect(legacy.spc.rules).toEqual(['WE1', 'WE4']);
	});
});
