// The plan and station forms ↔ the API's SI shapes. People type pF, V, nA, µH; the API and the
// domain speak farads, volts, amperes, henries. Every message goes back to the input it is about.
import type { z } from 'zod';
import type { SpecPlan } from '$lib/measure/types';
import { DEFAULT_BINS, validateSpecPlan } from '$lib/measure/spec';
import { BIN_CATEGORIES, type FormErrors, type PlanFormValues, type PointValues, type StationFormValues } from '$lib/schemas/plan-form';
import { SpecPlanSchema, StationBody } from '$lib/schemas/setup';
import {
	DEFAULT_BASELINE_PARTS,
	DEFAULT_CUSUM_DECISION_H,
	DEFAULT_CUSUM_REFERENCE_K,
	DEFAULT_EWMA_LAMBDA,
	DEFAULT_EWMA_LIMIT_WIDTH_SIGMA
} from '$lib/spc/charts';
import { ALL_RULE_IDS, DEFAULT_RULE_IDS } from '$lib/spc/types';
import { DEFAULT_P_CHART_PARTS, DEFAULT_SUBGROUP_SIZE } from './charts';
import { DEFAULT_REFERENCE_BASELINE } from './spc';
import type { CalibrationPolicy, Fixture } from './stations';

const PF = 1e-12;
const NF = 1e-9;
const NA = 1e-9;
const UH = 1e-6;
const MAX_ROWS = 32;

/** A number for an input: at most 10 significant digits, so 24.6 pF shows as 24.6, not 24.599999999999998. */
export function show(v: number | undefined | null, scale = 1): string {
	return v === undefined || v === null || !Number.isFinite(v) ? '' : String(Number((v / scale).toPrecision(10)));
}

/** Typed text → number: '' → undefined, a decimal comma is accepted, anything else → NaN. */
export function readNumber(text: string | undefined): number | undefined {
	const t = (text ?? '').trim().replace(',', '.');
	if (t === '') return undefined;
	return /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(t) ? Number(t) : Number.NaN;
}

/** Screen units → SI, rounded to 12 significant digits so 24.6 pF is 2.46e-11 F exactly as typed. */
const toSI = (v: number, scale: number) => Number((v * scale).toPrecision(12));

const emptyPoint = (): PointValues => ({ biasV: '', minPF: '', maxPF: '' });

/** The editor's fields for a plan (or an empty plan with `rows` empty bias rows). */
export function planToValues(plan: SpecPlan | null, rows = 8): PlanFormValues {
	const bins = Object.fromEntries(BIN_CATEGORIES.map((c) => [c, show(plan?.bins?.[c])])) as PlanFormValues['bins'];
	return {
		points: plan ? plan.points.map((p) => ({ biasV: show(p.biasV), minPF: show(p.minF, PF), maxPF: show(p.maxF, PF) })) : Array.from({ length: rows }, emptyPoint),
		ratio: { lowBiasV: show(plan?.ratio?.lowBiasV), highBiasV: show(plan?.ratio?.highBiasV), min: show(plan?.ratio?.min), max: show(plan?.ratio?.max) },
		q: { biasV: show(plan?.q?.biasV), min: show(plan?.q?.min) },
		leakage: { biasV: show(plan?.leakage?.biasV), maxNA: show(plan?.leakage?.maxA, NA) },
		fit: { maxRmsPct: show(plan?.fit?.maxRmsPct) },
		matching: { setSize: show(plan?.matching?.setSize), tolerancePct: show(plan?.matching?.tolerancePct) },
		bins,
		spc: {
			baselineParts: show(plan?.spc?.baselineParts),
			referenceBaselineParts: show(plan?.spc?.referenceBaselineParts),
			subgroupSize: show(plan?.spc?.subgroupSize),
			pChartParts: show(plan?.spc?.pChartParts),
			ewmaLambda: show(plan?.spc?.ewmaLambda),
			ewmaLimitWidthSigma: show(plan?.spc?.ewmaLimitWidthSigma),
			cusumReferenceK: show(plan?.spc?.cusumReferenceK),
			cusumDecisionH: show(plan?.spc?.cusumDecisionH),
			rules: [...(plan?.spc?.rules ?? DEFAULT_RULE_IDS)]
		},
		note: ''
	};
}

/** The placeholders the editor shows for bins and SPC (what applies when left empty). */
export const PLAN_DEFAULTS = {
	bins: { ...DEFAULT_BINS },
	baselineParts: DEFAULT_BASELINE_PARTS,
	spc: {
		baselineParts: DEFAULT_BASELINE_PARTS,
		referenceBaselineParts: DEFAULT_REFERENCE_BASELINE,
		subgroupSize: DEFAULT_SUBGROUP_SIZE,
		pChartParts: DEFAULT_P_CHART_PARTS,
		ewmaLambda: DEFAULT_EWMA_LAMBDA,
		ewmaLimitWidthSigma: DEFAULT_EWMA_LIMIT_WIDTH_SIGMA,
		cusumReferenceK: DEFAULT_CUSUM_REFERENCE_K,
		cusumDecisionH: DEFAULT_CUSUM_DECISION_H
	}
} as const;

/** The SPC number fields of the editor, in the plan's own names. */
export const SPC_NUMBER_FIELDS = ['baselineParts', 'referenceBaselineParts', 'subgroupSize', 'pChartParts', 'ewmaLambda', 'ewmaLimitWidthSigma', 'cusumReferenceK', 'cusumDecisionH'] as const;
const SPC_WHOLE = new Set<string>(['baselineParts', 'referenceBaselineParts', 'subgroupSize', 'pChartParts']);

/** Reads the editor's inputs out of a flat form object (`points.3.biasV`, `ratio.min`, …). */
export function planValuesFromForm(form: Record<string, string>): PlanFormValues {
	const v = (k: string) => form[k] ?? '';
	const indexes = Object.keys(form)
		.map((k) => /^points\.(\d+)\.(biasV|minPF|maxPF)$/.exec(k)?.[1])
		.filter((i): i is string => i !== undefined)
		.map(Number);
	const count = Math.min(indexes.length ? Math.max(...indexes) + 1 : 0, MAX_ROWS + 8);
	return {
		points: Array.from({ length: count }, (_, i) => ({ biasV: v(`points.${i}.biasV`), minPF: v(`points.${i}.minPF`), maxPF: v(`points.${i}.maxPF`) })),
		ratio: { lowBiasV: v('ratio.lowBiasV'), highBiasV: v('ratio.highBiasV'), min: v('ratio.min'), max: v('ratio.max') },
		q: { biasV: v('q.biasV'), min: v('q.min') },
		leakage: { biasV: v('leakage.biasV'), maxNA: v('leakage.maxNA') },
		fit: { maxRmsPct: v('fit.maxRmsPct') },
		matching: { setSize: v('matching.setSize'), tolerancePct: v('matching.tolerancePct') },
		bins: Object.fromEntries(BIN_CATEGORIES.map((c) => [c, v(`bins.${c}`)])) as PlanFormValues['bins'],
		spc: {
			...(Object.fromEntries(SPC_NUMBER_FIELDS.map((f) => [f, v(`spc.${f}`)])) as Omit<PlanFormValues['spc'], 'rules'>),
			// A form posted without the rule boxes (an older page, a script) keeps the defaults.
			rules: 'spc.rules' in form ? ALL_RULE_IDS.filter((id) => form[`spc.rule.${id}`] !== undefined) : [...DEFAULT_RULE_IDS]
		},
		note: v('note')
	};
}

/** Collects numbers from typed fields, noting a message per field that is not a number or is missing. */
class Reader {
	errors: FormErrors = {};
	num(name: string, text: string, opts: { required?: boolean; whole?: boolean } = {}): number | undefined {
		const n = readNumber(text);
		if (n === undefined) {
			if (opts.required) this.errors[name] ??= 'Enter a value';
			return undefined;
		}
		if (Number.isNaN(n)) this.errors[name] ??= opts.whole ? 'Enter a whole number' : 'Enter a number, e.g. 24.6';
		else if (opts.whole && !Number.isInteger(n)) this.errors[name] ??= 'Enter a whole number';
		// An optional field that is not a number is left out, so the rest of the plan is still checked.
		return Number.isNaN(n) && !opts.required ? undefined : n;
	}
}

const anyFilled = (o: Record<string, string>) => Object.values(o).some((s) => s.trim() !== '');

/** A zod issue's path in the SI plan → the input it is about. `rowOf` maps plan point index → table row. */
function planField(path: PropertyKey[], rowOf: number[]): string {
	const [head, index, leaf] = path.map(String);
	if (head === 'points' && index !== undefined && /^\d+$/.test(index)) {
		const row = rowOf[Number(index)] ?? Number(index);
		const col = leaf === 'minF' ? 'minPF' : leaf === 'maxF' ? 'maxPF' : 'biasV';
		return `points.${row}.${col}`;
	}
	if (head === 'points') return 'points';
	if (head === 'leakage' && index === 'maxA') return 'leakage.maxNA';
	if (head === 'ratio' && index === undefined) return 'ratio.min';
	return [head, index].filter((p) => p !== undefined).join('.') || '_';
}

/** Domain and zod messages in words an engineer reads beside an input. */
function planMessage(issue: { message: string; code?: string; minimum?: unknown; maximum?: unknown }, rowOf: number[]): string {
	const m = issue.message;
	const dup = /^duplicates points\.(\d+)\.biasV$/.exec(m);
	if (dup) return `Same bias as row ${(rowOf[Number(dup[1])] ?? Number(dup[1])) + 1}`;
	const words: Record<string, string> = {
		'must be below maxF': 'Min must be below Max',
		'must be one of the points': 'Use a bias from the table of points',
		'must be below highBiasV': 'Low bias must be below high bias',
		'must be below max': 'Min must be below max',
		'needs min or max': 'Give a minimum or a maximum ratio',
		'must be in (0, 100)': 'Between 0 and 100 %'
	};
	if (words[m]) return words[m];
	// zod's own wording ("Too small: expected number to be >=2") reads badly beside an input.
	if (issue.code === 'too_small' && m.startsWith('Too small')) return `At least ${String(issue.minimum)}`;
	if (issue.code === 'too_big' && m.startsWith('Too big')) return `At most ${String(issue.maximum)}`;
	return m.charAt(0).toUpperCase() + m.slice(1);
}

export type PlanParse = { ok: true; plan: SpecPlan } | { ok: false; errors: FormErrors };

/** The editor's text → an SI plan validated by SpecPlanSchema; empty rows and empty sections are left out. */
export function parsePlanForm(values: PlanFormValues): PlanParse {
	const r = new Reader();
	const points: SpecPlan['points'] = [];
	const rowOf: number[] = [];
	if (values.points.length > MAX_ROWS) r.errors.points = `At most ${MAX_ROWS} bias points`;
	values.points.forEach((p, row) => {
		if (!anyFilled(p)) return;
		const biasV = r.num(`points.${row}.biasV`, p.biasV, { required: true });
		const minPF = r.num(`points.${row}.minPF`, p.minPF);
		const maxPF = r.num(`points.${row}.maxPF`, p.maxPF);
		points.push({
			biasV: biasV ?? Number.NaN,
			...(minPF === undefined ? {} : { minF: toSI(minPF, PF) }),
			...(maxPF === undefined ? {} : { maxF: toSI(maxPF, PF) })
		});
		rowOf.push(row);
	});
	const plan: SpecPlan = { points };
	if (anyFilled(values.ratio)) {
		const min = r.num('ratio.min', values.ratio.min);
		const max = r.num('ratio.max', values.ratio.max);
		plan.ratio = {
			lowBiasV: r.num('ratio.lowBiasV', values.ratio.lowBiasV, { required: true }) ?? Number.NaN,
			highBiasV: r.num('ratio.highBiasV', values.ratio.highBiasV, { required: true }) ?? Number.NaN,
			...(min === undefined ? {} : { min }),
			...(max === undefined ? {} : { max })
		};
	}
	if (anyFilled(values.q)) {
		plan.q = { biasV: r.num('q.biasV', values.q.biasV, { required: true }) ?? Number.NaN, min: r.num('q.min', values.q.min, { required: true }) ?? Number.NaN };
	}
	if (anyFilled(values.leakage)) {
		const maxNA = r.num('leakage.maxNA', values.leakage.maxNA, { required: true });
		plan.leakage = { biasV: r.num('leakage.biasV', values.leakage.biasV, { required: true }) ?? Number.NaN, maxA: maxNA === undefined ? Number.NaN : toSI(maxNA, NA) };
	}
	const maxRmsPct = r.num('fit.maxRmsPct', values.fit.maxRmsPct);
	if (maxRmsPct !== undefined) plan.fit = { maxRmsPct };
	if (anyFilled(values.matching)) {
		plan.matching = {
			setSize: r.num('matching.setSize', values.matching.setSize, { required: true, whole: true }) ?? Number.NaN,
			tolerancePct: r.num('matching.tolerancePct', values.matching.tolerancePct, { required: true }) ?? Number.NaN
		};
	}
	const bins: NonNullable<SpecPlan['bins']> = {};
	for (const c of BIN_CATEGORIES) {
		const b = r.num(`bins.${c}`, values.bins[c], { whole: true });
		if (b !== undefined) bins[c] = b;
	}
	if (Object.keys(bins).length > 0) plan.bins = bins;
	const spc: NonNullable<SpecPlan['spc']> = {};
	for (const f of SPC_NUMBER_FIELDS) {
		const n = r.num(`spc.${f}`, values.spc[f], { whole: SPC_WHOLE.has(f) });
		if (n !== undefined) spc[f] = n;
	}
	// The default rule set is stored as no choice, so the plan follows the product's defaults.
	const rules = ALL_RULE_IDS.filter((id) => values.spc.rules.includes(id));
	const isDefault = rules.length === DEFAULT_RULE_IDS.length && rules.every((id) => DEFAULT_RULE_IDS.includes(id));
	if (!isDefault) spc.rules = rules;
	if (Object.keys(spc).length > 0) plan.spc = spc;
	const parsed = SpecPlanSchema.safeParse(plan);
	if (parsed.success && Object.keys(r.errors).length === 0) return { ok: true, plan: parsed.data };
	const errors: FormErrors = { ...r.errors };
	// A field already marked as "not a number" keeps that message: it is the one to fix first.
	for (const issue of parsed.success ? [] : parsed.error.issues) errors[planField(issue.path, rowOf)] ??= planMessage(issue, rowOf);
	// zod skips the plan's meaning while a field has the wrong type; ask the domain directly so
	// "min above max in row 3" shows in the same answer as "not a number in row 5".
	const meaning = validateSpecPlan(plan);
	if (!meaning.ok) for (const e of meaning.errors) errors[planField(e.path.split('.'), rowOf)] ??= planMessage(e, rowOf);
	return { ok: false, errors };
}

/** Keys in PostgreSQL jsonb order (shorter first, then bytewise), so a stored plan and an equal new one stringify alike. */
function jsonbOrder(value: unknown): unknown {
	if (Array.isArray(value)) return value.map(jsonbOrder);
	if (value === null || typeof value !== 'object') return value;
	const keys = Object.keys(value).sort((a, b) => a.length - b.length || (a < b ? -1 : a > b ? 1 : 0));
	return Object.fromEntries(keys.map((k) => [k, jsonbOrder((value as Record<string, unknown>)[k])]));
}

/** Numbers equal to the current plan's to 10 significant digits take the stored value (no phantom change from pF ↔ F). */
function snap(next: unknown, current: unknown): unknown {
	if (typeof next === 'number' && typeof current === 'number') return show(next) === show(current) ? current : next;
	if (Array.isArray(next)) return next.map((v, i) => snap(v, Array.isArray(current) ? current[i] : undefined));
	if (next !== null && typeof next === 'object') {
		const cur = current !== null && typeof current === 'object' && !Array.isArray(current) ? (current as Record<string, unknown>) : {};
		return Object.fromEntries(Object.entries(next).map(([k, v]) => [k, snap(v, cur[k])]));
	}
	return next;
}

/** The plan as it should be stored next to `current`: unchanged numbers as stored, keys in jsonb order. */
export function alignPlan(next: SpecPlan, current: SpecPlan | null): SpecPlan {
	return jsonbOrder(current ? snap(next, current) : next) as SpecPlan;
}

// ---------------------------------------------------------------- stations

export function stationToValues(s: { name: string; line: string | null; fixture: Fixture; calibrationPolicy: CalibrationPolicy } | null): StationFormValues {
	return {
		name: s?.name ?? '',
		line: s?.line ?? '',
		inductanceUH: show(s?.fixture.inductanceH, UH),
		strayPF: show(s?.fixture.strayF, PF),
		blockingNF: s ? (s.fixture.blockingF === null ? 'none' : show(s.fixture.blockingF, NF)) : '',
		arrangement: s?.fixture.arrangement ?? 'single',
		validityHours: show(s?.calibrationPolicy.validityHours),
		maxResidualPpm: show(s?.calibrationPolicy.maxResidualPpm),
		maxInductanceChangePct: show(s?.calibrationPolicy.maxInductanceChangePct),
		maxStrayChangePF: show(s?.calibrationPolicy.maxStrayChangeF, PF)
	};
}

export function stationValuesFromForm(form: Record<string, string>): StationFormValues {
	const blank = stationToValues(null);
	return Object.fromEntries(Object.keys(blank).map((k) => [k, form[k] ?? ''])) as StationFormValues;
}

export type StationInput = z.infer<typeof StationBody>;

const STATION_FIELDS: Record<string, keyof StationFormValues> = {
	name: 'name',
	line: 'line',
	'fixture.inductanceH': 'inductanceUH',
	'fixture.strayF': 'strayPF',
	'fixture.blockingF': 'blockingNF',
	'fixture.arrangement': 'arrangement',
	'calibration.validityHours': 'validityHours',
	'calibration.maxResidualPpm': 'maxResidualPpm',
	'calibration.maxInductanceChangePct': 'maxInductanceChangePct',
	'calibration.maxStrayChangeF': 'maxStrayChangePF'
};

/** The station form → the API's StationBody (SI); `name` is taken from `fixedName` when editing. */
export function parseStationForm(values: StationFormValues, fixedName?: string): { ok: true; station: StationInput } | { ok: false; errors: FormErrors } {
	const r = new Reader();
	if (fixedName === undefined && values.name.trim() === '') r.errors.name = 'Enter a station name';
	const blockingText = values.blockingNF.trim().toLowerCase();
	const blocking = blockingText === 'none' ? null : r.num('blockingNF', values.blockingNF, { required: true });
	const inductance = r.num('inductanceUH', values.inductanceUH, { required: true });
	const stray = r.num('strayPF', values.strayPF, { required: true });
	const validityHours = r.num('validityHours', values.validityHours);
	const maxResidualPpm = r.num('maxResidualPpm', values.maxResidualPpm);
	const maxInductanceChangePct = r.num('maxInductanceChangePct', values.maxInductanceChangePct);
	const maxStrayChange = r.num('maxStrayChangePF', values.maxStrayChangePF);
	const body = {
		name: fixedName ?? values.name,
		...(values.line.trim() ? { line: values.line.trim() } : {}),
		fixture: {
			inductanceH: inductance === undefined ? Number.NaN : toSI(inductance, UH),
			strayF: stray === undefined ? Number.NaN : toSI(stray, PF),
			blockingF: blocking === null ? null : blocking === undefined ? Number.NaN : toSI(blocking, NF),
			arrangement: values.arrangement
		},
		calibration: {
			...(validityHours === undefined ? {} : { validityHours }),
			...(maxResidualPpm === undefined ? {} : { maxResidualPpm }),
			...(maxInductanceChangePct === undefined ? {} : { maxInductanceChangePct }),
			...(maxStrayChange === undefined ? {} : { maxStrayChangeF: toSI(maxStrayChange, PF) })
		}
	};
	const parsed = StationBody.safeParse(body);
	if (parsed.success && Object.keys(r.errors).length === 0) return { ok: true, station: parsed.data };
	const errors: FormErrors = { ...r.errors };
	for (const issue of parsed.success ? [] : parsed.error.issues) {
		const key = STATION_FIELDS[issue.path.map(String).join('.')] ?? '_';
		errors[key] ??= issue.code === 'too_small' ? 'Enter a value' : issue.message;
	}
	return { ok: false, errors };
}
