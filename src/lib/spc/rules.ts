/**
 * Run rules for Shewhart charts, labelled as in tests/reference/spc/rules.md:
 * Western Electric WE1-WE4 (Statistical Quality Control Handbook, 1956) and Nelson N1-N8
 * (J. Quality Technology 16(4), 1984), plus EWMA and tabular CUSUM signals.
 *
 * Zones use sigma of the plotted statistic (limits.shewhart.sigma) around the centre line CL.
 * Choices where the sources disagree or are silent:
 *
 * - WE1/N1: a point strictly above UCL or strictly below LCL. A point exactly on a limit
 *   does not fire (the publications say "beyond" the limits).
 * - "More than k sigma" is strict: a point exactly on CL + 2 sigma is not in zone A, and a
 *   point exactly on CL + 1 sigma is not in zone B. Such a boundary point therefore belongs
 *   to the inner zone, so a point exactly at 1 sigma counts as zone C for N7 and as
 *   "in zone C" for N8.
 * - WE2/N5 and WE3/N6 count points beyond the control limit too ("zone A or beyond",
 *   reading 3 of rules.md), require the qualifying points on the same side (reading 4),
 *   let the remaining point(s) lie anywhere, and fire only when the newest point of the
 *   window is itself one of the qualifying points. That last choice makes the violation
 *   name the point that completes the pattern and avoids re-reporting the same pair when
 *   a non-qualifying point follows it.
 * - WE4 uses 8 points, N2 uses 9 (reading 1: both published counts, as separate rules).
 *   A point exactly on CL is on neither side and breaks the run.
 * - N3: 6 points in a row, each strictly greater (or strictly smaller) than the one before,
 *   i.e. 5 successive strict increases; an equal neighbour breaks the trend (reading 2
 *   counts points, as Nelson does).
 * - N4: 14 points, i.e. 13 successive differences, all non-zero and alternating in sign;
 *   a zero difference breaks the alternation.
 * - N7: 15 points in a row with |x - CL| <= sigma.
 * - N8: 8 points in a row all with |x - CL| > sigma, with at least one on each side of CL
 *   ("on both sides", as published); 8 such points all on one side are left to WE3/N2.
 * - At the start of a chart (the first points after the limits were set) the k-of-m windows
 *   of WE2/N5 and WE3/N6 hold fewer than m points; they are counted over the points there
 *   are, so the first two points both beyond 2 sigma on one side already fire WE2.
 * - A rule fires at every point at which its condition holds for the window ending there,
 *   so a run of 10 points on one side fires WE4 at its 8th, 9th and 10th points.
 * - EWMA: the statistic strictly outside its exact time-varying limits (rule id EWMA).
 *   CUSUM: an upper (lower) sum strictly greater than H = h sigma (rule ids CUSUM+, CUSUM-).
 *   The sums are not reset after a signal; an engineer restarts them by recomputing limits.
 *
 * Two implementations are kept on purpose: evaluateRules scans a whole series with running
 * counters (for charts), step keeps only a bounded window (for the station's HTTP post).
 * Tests check that they agree on random series.
 */
import { cusumUpdate, ewmaLimitsAt, ewmaUpdate } from './charts';
import { ALL_RULE_IDS } from './types';
import type { ChartRuleLimits, RuleId, RuleState, SpcResult, Violation } from './types';
import { checkAllFinite, fail, succeed } from './validation';

/** Longest window any rule looks at (N7: 15 points). */
export const RULE_WINDOW_POINTS = 15;

type Direction = 'above' | 'below' | 'increasing' | 'decreasing' | 'both sides' | null;

const RULE_TEXT: Record<RuleId, string> = {
	WE1: 'point beyond a 3-sigma control limit',
	WE2: '2 of 3 consecutive points more than 2 sigma from the centre line on the same side',
	WE3: '4 of 5 consecutive points more than 1 sigma from the centre line on the same side',
	WE4: '8 consecutive points on the same side of the centre line',
	N1: 'point more than 3 sigma from the centre line',
	N2: '9 points in a row on the same side of the centre line',
	N3: '6 points in a row steadily increasing or decreasing',
	N4: '14 points in a row alternating up and down',
	N5: '2 of 3 points in a row more than 2 sigma from the centre line on the same side',
	N6: '4 of 5 points in a row more than 1 sigma from the centre line on the same side',
	N7: '15 points in a row within 1 sigma of the centre line',
	N8: '8 points in a row more than 1 sigma from the centre line, on both sides',
	EWMA: 'EWMA statistic beyond its control limit',
	'CUSUM+': 'upper CUSUM above the decision interval',
	'CUSUM-': 'lower CUSUM above the decision interval'
};

/** What a rule looks for, in words (the same text its violations carry). */
export function ruleText(id: RuleId): string {
	return RULE_TEXT[id];
}

const RULE_ORDER = new Map<RuleId, number>(ALL_RULE_IDS.map((id, i) => [id, i]));

function violation(ruleId: RuleId, index: number, direction: Direction): Violation {
	const where = direction ? ` (${direction})` : '';
	return { ruleId, index, description: `${ruleId}: ${RULE_TEXT[ruleId]}${where}, at point ${index}` };
}

function sortViolations(list: Violation[]): Violation[] {
	return list.sort((a, b) => a.index - b.index || (RULE_ORDER.get(a.ruleId) ?? 0) - (RULE_ORDER.get(b.ruleId) ?? 0));
}

/** Checks limits and the enabled-rule list; assumes nothing about either. */
function checkLimits(limits: ChartRuleLimits, enabled: ReadonlySet<RuleId>): SpcResult<null> {
	const s = limits.shewhart;
	if (![s.centerLine, s.sigma, s.upperControlLimit, s.lowerControlLimit].every(Number.isFinite)) {
		return fail('NON_FINITE_VALUE', 'control limits must be finite');
	}
	if (!(s.sigma > 0)) return fail('ZERO_SIGMA', 'sigma of the plotted statistic must be positive');
	if (!(s.lowerControlLimit <= s.centerLine && s.centerLine <= s.upperControlLimit)) {
		return fail('INVALID_PARAMETER', 'need LCL <= CL <= UCL');
	}
	for (const id of enabled) {
		if (!RULE_ORDER.has(id)) return fail('INVALID_PARAMETER', `unknown rule id ${String(id)}`);
	}
	if (enabled.has('EWMA') && !limits.ewma) return fail('INVALID_PARAMETER', 'EWMA enabled but no EWMA parameters');
	if ((enabled.has('CUSUM+') || enabled.has('CUSUM-')) && !limits.cusum) {
		return fail('INVALID_PARAMETER', 'CUSUM enabled but no CUSUM parameters');
	}
	return succeed(null);
}

interface Zones {
	readonly side: -1 | 0 | 1;
	/** +1 / -1 when more than 1 sigma above / below CL, else 0. */
	readonly beyond1: -1 | 0 | 1;
	readonly beyond2: -1 | 0 | 1;
	readonly beyondLimit: -1 | 0 | 1;
}

function classify(x: number, limits: ChartRuleLimits): Zones {
	const { centerLine: cl, sigma, upperControlLimit: ucl, lowerControlLimit: lcl } = limits.shewhart;
	const band = (k: number): -1 | 0 | 1 => (x > cl + k * sigma ? 1 : x < cl - k * sigma ? -1 : 0);
	return {
		side: x > cl ? 1 : x < cl ? -1 : 0,
		beyond1: band(1),
		beyond2: band(2),
		beyondLimit: x > ucl ? 1 : x < lcl ? -1 : 0
	};
}

const sideWord = (s: number): Direction => (s > 0 ? 'above' : 'below');

/**
 * Evaluates the enabled rules over a whole series with frozen limits. Assumes values in
 * production order, index 0 being the first point after the state was initialised; the
 * EWMA starts at its target and the CUSUM sums at zero.
 */
export function evaluateRules(
	values: readonly number[],
	limits: ChartRuleLimits,
	rulesEnabled: readonly RuleId[]
): SpcResult<Violation[]> {
	const enabled = new Set(rulesEnabled);
	const check = checkLimits(limits, enabled);
	if (!check.ok) return check;
	const bad = checkAllFinite(values);
	if (bad) return { ok: false, error: bad };

	const out: Violation[] = [];
	const zones = values.map((x) => classify(x, limits));
	// Prefix counts of points beyond 1 and 2 sigma on each side, for the k-of-m rules.
	const prefix = (pick: (z: Zones) => boolean): number[] => {
		const p = [0];
		zones.forEach((z, i) => p.push((p[i] ?? 0) + (pick(z) ? 1 : 0)));
		return p;
	};
	const up2 = prefix((z) => z.beyond2 === 1);
	const dn2 = prefix((z) => z.beyond2 === -1);
	const up1 = prefix((z) => z.beyond1 === 1);
	const dn1 = prefix((z) => z.beyond1 === -1);
	const countIn = (p: number[], from: number, to: number) => (p[to + 1] ?? 0) - (p[from] ?? 0);

	let sideRun = 0;
	let prevSide = 0;
	let incRun = 0;
	let decRun = 0;
	let altRun = 0;
	let prevDiffSign = 0;
	let zoneCRun = 0;
	let outerRun = 0;
	let lastOuterAbove = -Infinity;
	let lastOuterBelow = -Infinity;
	let ewma = limits.ewma?.target ?? 0;
	let cusumUpper = 0;
	let cusumLower = 0;

	for (let i = 0; i < values.length; i++) {
		const x = values[i] ?? 0;
		const z = zones[i] ?? classify(x, limits);

		sideRun = z.side !== 0 && z.side === prevSide ? sideRun + 1 : z.side !== 0 ? 1 : 0;
		prevSide = z.side;

		let diffSign = 0;
		if (i > 0) {
			const d = x - (values[i - 1] ?? x);
			diffSign = d > 0 ? 1 : d < 0 ? -1 : 0;
			incRun = diffSign === 1 ? incRun + 1 : 0;
			decRun = diffSign === -1 ? decRun + 1 : 0;
			altRun = diffSign === 0 ? 0 : prevDiffSign !== 0 && diffSign === -prevDiffSign ? altRun + 1 : 1;
		}
		prevDiffSign = diffSign;

		zoneCRun = z.beyond1 === 0 ? zoneCRun + 1 : 0;
		outerRun = z.beyond1 !== 0 ? outerRun + 1 : 0;
		if (z.beyond1 === 1) lastOuterAbove = i;
		if (z.beyond1 === -1) lastOuterBelow = i;

		if (z.beyondLimit !== 0) {
			if (enabled.has('WE1')) out.push(violation('WE1', i, sideWord(z.beyondLimit)));
			if (enabled.has('N1')) out.push(violation('N1', i, sideWord(z.beyondLimit)));
		}
		if (z.beyond2 !== 0) {
			const n = countIn(z.beyond2 === 1 ? up2 : dn2, Math.max(0, i - 2), i);
			if (n >= 2) {
				if (enabled.has('WE2')) out.push(violation('WE2', i, sideWord(z.beyond2)));
				if (enabled.has('N5')) out.push(violation('N5', i, sideWord(z.beyond2)));
			}
		}
		if (z.beyond1 !== 0) {
			const n = countIn(z.beyond1 === 1 ? up1 : dn1, Math.max(0, i - 4), i);
			if (n >= 4) {
				if (enabled.has('WE3')) out.push(violation('WE3', i, sideWord(z.beyond1)));
				if (enabled.has('N6')) out.push(violation('N6', i, sideWord(z.beyond1)));
			}
		}
		if (sideRun >= 8 && enabled.has('WE4')) out.push(violation('WE4', i, sideWord(z.side)));
		if (sideRun >= 9 && enabled.has('N2')) out.push(violation('N2', i, sideWord(z.side)));
		if (enabled.has('N3') && (incRun >= 5 || decRun >= 5)) out.push(violation('N3', i, incRun >= 5 ? 'increasing' : 'decreasing'));
		if (enabled.has('N4') && altRun >= 13) out.push(violation('N4', i, null));
		if (enabled.has('N7') && zoneCRun >= 15) out.push(violation('N7', i, null));
		if (enabled.has('N8') && outerRun >= 8 && lastOuterAbove >= i - 7 && lastOuterBelow >= i - 7) {
			out.push(violation('N8', i, 'both sides'));
		}

		if (limits.ewma) {
			ewma = ewmaUpdate(limits.ewma, ewma, x);
			const lim = ewmaLimitsAt(limits.ewma, i + 1);
			if (enabled.has('EWMA') && (ewma > lim.upper || ewma < lim.lower)) {
				out.push(violation('EWMA', i, ewma > lim.upper ? 'above' : 'below'));
			}
		}
		if (limits.cusum) {
			({ upper: cusumUpper, lower: cusumLower } = cusumUpdate(limits.cusum, cusumUpper, cusumLower, x));
			const bigH = limits.cusum.decisionH * limits.cusum.sigma;
			if (enabled.has('CUSUM+') && cusumUpper > bigH) out.push(violation('CUSUM+', i, null));
			if (enabled.has('CUSUM-') && cusumLower > bigH) out.push(violation('CUSUM-', i, null));
		}
	}
	return succeed(sortViolations(out));
}

/** State of a chart before its first point after the limits were (re)computed; assumes nothing. */
export function initialRuleState(): RuleState {
	return { schemaVersion: 1, pointCount: 0, recentValues: [], ewmaValue: null, cusumUpper: 0, cusumLower: 0 };
}

function checkState(state: RuleState): SpcResult<null> {
	const okNumber = (v: unknown) => typeof v === 'number' && Number.isFinite(v);
	if (
		state.schemaVersion !== 1 ||
		!Number.isInteger(state.pointCount) ||
		state.pointCount < 0 ||
		!Array.isArray(state.recentValues) ||
		state.recentValues.length > Math.min(state.pointCount, RULE_WINDOW_POINTS) ||
		!state.recentValues.every(okNumber) ||
		!(state.ewmaValue === null || okNumber(state.ewmaValue)) ||
		!okNumber(state.cusumUpper) ||
		!okNumber(state.cusumLower) ||
		state.cusumUpper < 0 ||
		state.cusumLower < 0
	) {
		return fail('INVALID_STATE', 'rule state is malformed');
	}
	return succeed(null);
}

/** True when the last `count` entries of `window` all satisfy `test`; assumes count >= 1. */
function lastAll<T>(window: readonly T[], count: number, test: (item: T) => boolean): boolean {
	if (window.length < count) return false;
	for (let j = window.length - count; j < window.length; j++) {
		const item = window[j];
		if (item === undefined || !test(item)) return false;
	}
	return true;
}

function lastCount<T>(window: readonly T[], count: number, test: (item: T) => boolean): number {
	let n = 0;
	for (let j = Math.max(0, window.length - count); j < window.length; j++) {
		const item = window[j];
		if (item !== undefined && test(item)) n++;
	}
	return n;
}

/**
 * Feeds one new point to a chart. Assumes `state` came from initialRuleState or a previous
 * step with the same limits (recomputed limits need a fresh state). A null EWMA value (EWMA
 * parameters added to a running chart) restarts the EWMA at its target. Work and state size are
 * bounded by the longest rule window, not by the history. On bad input the error is
 * returned and the caller keeps its old state.
 */
export function step(
	state: RuleState,
	limits: ChartRuleLimits,
	value: number,
	rulesEnabled: readonly RuleId[]
): SpcResult<{ state: RuleState; violations: Violation[] }> {
	const enabled = new Set(rulesEnabled);
	const check = checkLimits(limits, enabled);
	if (!check.ok) return check;
	const stateCheck = checkState(state);
	if (!stateCheck.ok) return stateCheck;
	if (!Number.isFinite(value)) return fail('NON_FINITE_VALUE', `value is ${String(value)}, not a finite number`);

	const index = state.pointCount;
	const window = [...state.recentValues, value].slice(-RULE_WINDOW_POINTS);
	const zones = window.map((x) => classify(x, limits));
	const last = zones[zones.length - 1] ?? classify(value, limits);
	const out: Violation[] = [];

	if (last.beyondLimit !== 0) {
		if (enabled.has('WE1')) out.push(violation('WE1', index, sideWord(last.beyondLimit)));
		if (enabled.has('N1')) out.push(violation('N1', index, sideWord(last.beyondLimit)));
	}
	if (last.beyond2 !== 0 && lastCount(zones, 3, (z) => z.beyond2 === last.beyond2) >= 2) {
		if (enabled.has('WE2')) out.push(violation('WE2', index, sideWord(last.beyond2)));
		if (enabled.has('N5')) out.push(violation('N5', index, sideWord(last.beyond2)));
	}
	if (last.beyond1 !== 0 && lastCount(zones, 5, (z) => z.beyond1 === last.beyond1) >= 4) {
		if (enabled.has('WE3')) out.push(violation('WE3', index, sideWord(last.beyond1)));
		if (enabled.has('N6')) out.push(violation('N6', index, sideWord(last.beyond1)));
	}
	if (last.side !== 0) {
		if (enabled.has('WE4') && lastAll(zones, 8, (z) => z.side === last.side)) out.push(violation('WE4', index, sideWord(last.side)));
		if (enabled.has('N2') && lastAll(zones, 9, (z) => z.side === last.side)) out.push(violation('N2', index, sideWord(last.side)));
	}
	if (enabled.has('N3') || enabled.has('N4')) {
		const diffs: number[] = [];
		for (let j = 1; j < window.length; j++) diffs.push(Math.sign((window[j] ?? 0) - (window[j - 1] ?? 0)));
		if (enabled.has('N3')) {
			if (lastAll(diffs, 5, (d) => d === 1)) out.push(violation('N3', index, 'increasing'));
			else if (lastAll(diffs, 5, (d) => d === -1)) out.push(violation('N3', index, 'decreasing'));
		}
		if (enabled.has('N4') && diffs.length >= 13) {
			let alternating = true;
			for (let j = diffs.length - 13; j < diffs.length; j++) {
				const d = diffs[j] ?? 0;
				if (d === 0 || (j > diffs.length - 13 && d !== -(diffs[j - 1] ?? 0))) alternating = false;
			}
			if (alternating) out.push(violation('N4', index, null));
		}
	}
	if (enabled.has('N7') && lastAll(zones, 15, (z) => z.beyond1 === 0)) out.push(violation('N7', index, null));
	if (
		enabled.has('N8') &&
		lastAll(zones, 8, (z) => z.beyond1 !== 0) &&
		lastCount(zones, 8, (z) => z.beyond1 === 1) > 0 &&
		lastCount(zones, 8, (z) => z.beyond1 === -1) > 0
	) {
		out.push(violation('N8', index, 'both sides'));
	}

	let ewmaValue = state.ewmaValue;
	if (limits.ewma) {
		ewmaValue = ewmaUpdate(limits.ewma, ewmaValue ?? limits.ewma.target, value);
		const lim = ewmaLimitsAt(limits.ewma, index + 1);
		if (enabled.has('EWMA') && (ewmaValue > lim.upper || ewmaValue < lim.lower)) {
			out.push(violation('EWMA', index, ewmaValue > lim.upper ? 'above' : 'below'));
		}
	}
	let cusumUpper = state.cusumUpper;
	let cusumLower = state.cusumLower;
	if (limits.cusum) {
		({ upper: cusumUpper, lower: cusumLower } = cusumUpdate(limits.cusum, cusumUpper, cusumLower, value));
		const bigH = limits.cusum.decisionH * limits.cusum.sigma;
		if (enabled.has('CUSUM+') && cusumUpper > bigH) out.push(violation('CUSUM+', index, null));
		if (enabled.has('CUSUM-') && cusumLower > bigH) out.push(violation('CUSUM-', index, null));
	}

	return succeed({
		state: { schemaVersion: 1, pointCount: index + 1, recentValues: window, ewmaValue, cusumUpper, cusumLower },
		violations: sortViolations(out)
	});
}
