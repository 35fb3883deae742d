// A chart detail from the API → the panels to draw: series, reference lines, zone bands and
// varying limits. Pure, so the drawing components only place what they are given.
import type { ChartDetail } from '$lib/server/charts';
import type { ShewhartLimits } from '$lib/spc/types';

export type PlotPoint = { x: number; y: number; title: string; serial?: string; at?: string; rules: string[]; unitId?: number };
export type RefLine = { value: number; label: string; tone: 'center' | 'limit' | 'spec' | 'zero' };
export type Band = { from: number; to: number; tone: 'one' | 'two' };
export type Envelope = { x: number; upper: number; lower: number }[];
export type Panel = {
	id: string;
	title: string;
	unit: string;
	/** What the x axis counts, and what one plotted point is. */
	xLabel: string;
	noun: string;
	series: PlotPoint[];
	/** A second series in the same panel (the lower CUSUM). */
	second?: PlotPoint[];
	lines: RefLine[];
	bands: Band[];
	envelope?: Envelope;
	size: 'main' | 'small';
};
export type ChartModel = { panels: Panel[]; message: string | null };

const POINTS = { xLabel: 'point number', noun: 'points' };
const SUBGROUPS = { xLabel: 'first point of the subgroup', noun: 'subgroups' };

const isShewhart = (v: unknown): v is ShewhartLimits =>
	typeof v === 'object' && v !== null && 'centerLine' in v && 'upperControlLimit' in v && 'lowerControlLimit' in v && 'sigma' in v;

function shewhartLines(l: ShewhartLimits, withLcl = true): RefLine[] {
	return [
		{ value: l.centerLine, label: 'CL', tone: 'center' },
		{ value: l.upperControlLimit, label: 'UCL', tone: 'limit' },
		...(withLcl ? [{ value: l.lowerControlLimit, label: 'LCL', tone: 'limit' as const }] : [])
	];
}

function zones(l: ShewhartLimits): Band[] {
	return [
		{ from: l.centerLine - 2 * l.sigma, to: l.centerLine + 2 * l.sigma, tone: 'two' },
		{ from: l.centerLine - l.sigma, to: l.centerLine + l.sigma, tone: 'one' }
	];
}

/** Marks a point beyond fixed limits (charts whose rules the server does not run per point). */
const beyond = (y: number, l: ShewhartLimits | null, id: string) => (l && (y > l.upperControlLimit || y < l.lowerControlLimit) ? [id] : []);

export function chartModel(d: ChartDetail): ChartModel {
	const unit = d.chart.unit;
	const pts = d.points;
	const at = (i: number) => pts[i];
	const shew = d.limits?.shewhart ?? null;
	const data = d.data;
	if ('error' in data) return { panels: [], message: data.error };
	const spec: RefLine[] = [
		...(d.spec.lowerSpecLimit !== undefined ? [{ value: d.spec.lowerSpecLimit, label: 'LSL', tone: 'spec' as const }] : []),
		...(d.spec.upperSpecLimit !== undefined ? [{ value: d.spec.upperSpecLimit, label: 'USL', tone: 'spec' as const }] : [])
	];
	switch (data.view) {
		case 'imr': {
			const individuals: Panel = {
				id: 'individuals',
				title: `Individuals · ${d.chart.characteristic}`,
				unit,
				...POINTS,
				series: pts.map((p) => ({ x: p.seq, y: p.value, title: `Point ${p.seq}`, serial: p.serial, at: p.at, rules: p.rules, unitId: p.unitId })),
				lines: [...(shew ? shewhartLines(shew) : []), ...spec],
				bands: shew ? zones(shew) : [],
				size: 'main'
			};
			const mrL = data.mrLimits;
			const mr: Panel = {
				id: 'moving-range',
				title: 'Moving range (span 2)',
				unit,
				...POINTS,
				series: data.movingRange.flatMap((m, i) =>
					m.value === null
						? []
						: [{ x: m.seq, y: m.value, title: `Moving range at point ${m.seq}`, serial: at(i)?.serial, at: at(i)?.at, rules: mrL && m.value > mrL.upperControlLimit ? ['MR above UCL'] : [] }]
				),
				lines: mrL ? shewhartLines({ ...mrL, sigma: 0 }, mrL.lowerControlLimit > 0) : [],
				bands: [],
				size: 'small'
			};
			return { panels: [individuals, mr], message: shew ? null : 'No frozen limits yet: the chart shows its points until the baseline parts are in.' };
		}
		case 'xbar-r':
		case 'xbar-s': {
			const xl = isShewhart(data.xbar) ? data.xbar : null;
			const dl = isShewhart(data.dispersion) ? data.dispersion : null;
			const dName = data.view === 'xbar-r' ? 'Range' : 'Standard deviation';
			const n = data.subgroupSize;
			const sub = (y: number, first: number, lim: ShewhartLimits | null): PlotPoint => ({ x: first, y, title: `Subgroup of ${n} from point ${first}`, rules: beyond(y, lim, 'beyond limit') });
			return {
				message: null,
				panels: [
					{ id: 'xbar', title: `Subgroup means (n = ${n}) · ${d.chart.characteristic}`, unit, ...SUBGROUPS, series: data.subgroups.map((s) => sub(s.mean, s.firstSeq, xl)), lines: xl ? shewhartLines(xl) : [], bands: xl ? zones(xl) : [], size: 'main' },
					{ id: 'dispersion', title: `${dName} per subgroup`, unit, ...SUBGROUPS, series: data.subgroups.map((s) => sub(s.dispersion, s.firstSeq, dl)), lines: dl ? shewhartLines(dl, dl.lowerControlLimit > 0) : [], bands: [], size: 'small' }
				]
			};
		}
		case 'ewma': {
			const target = d.limits?.ewma?.target;
			const series = data.series.map((s, i) => ({ x: s.seq, y: s.ewma, title: `EWMA at point ${s.seq}`, serial: at(i)?.serial, at: at(i)?.at, rules: s.beyond ? ['EWMA'] : [] }));
			return {
				message: null,
				panels: [
					{
						id: 'ewma',
						title: `EWMA (λ = ${d.limits?.ewma?.lambda ?? '—'}) · ${d.chart.characteristic}`,
						unit,
						...POINTS,
						series,
						lines: target === undefined ? [] : [{ value: target, label: 'Target', tone: 'center' }],
						bands: [],
						envelope: data.series.map((s) => ({ x: s.seq, upper: s.upper, lower: s.lower })),
						size: 'main'
					}
				]
			};
		}
		case 'cusum': {
			const h = data.decisionInterval;
			const mk = (s: (typeof data.series)[number], i: number, up: boolean): PlotPoint => ({
				x: s.seq,
				y: up ? s.upper : -s.lower,
				title: `${up ? 'C+' : 'C−'} at point ${s.seq}`,
				serial: at(i)?.serial,
				at: at(i)?.at,
				rules: up ? (s.signalUpper ? ['CUSUM+'] : []) : s.signalLower ? ['CUSUM-'] : []
			});
			return {
				message: null,
				panels: [
					{
						id: 'cusum',
						title: `CUSUM (C+ above, −C− below) · ${d.chart.characteristic}`,
						unit,
						...POINTS,
						series: data.series.map((s, i) => mk(s, i, true)),
						second: data.series.map((s, i) => mk(s, i, false)),
						lines: [
							{ value: 0, label: '0', tone: 'zero' },
							{ value: h, label: '+H', tone: 'limit' },
							{ value: -h, label: '−H', tone: 'limit' }
						],
						bands: [],
						size: 'main'
					}
				]
			};
		}
		case 'p': {
			const pct = (v: number) => v * 100;
			return {
				message: null,
				panels: [
					{
						id: 'p',
						title: `Yield per ${data.partsPerPoint} parts (all characteristics)`,
						unit: '%',
						xLabel: 'group of parts',
						noun: 'groups',
						series: data.series.map((s) => ({ x: s.index + 1, y: pct(s.value), title: `Group ${s.index + 1} of ${data.partsPerPoint} parts`, rules: s.beyond ? ['p beyond limit'] : [] })),
						lines: [{ value: pct(data.centerLine), label: 'CL', tone: 'center' }],
						bands: [],
						envelope: data.series.map((s) => ({ x: s.index + 1, upper: pct(s.ucl), lower: pct(s.lcl) })),
						size: 'main'
					}
				]
			};
		}
	}
}

/**
 * The y range of a panel: the series, control limits and varying limits, padded 8 %. Spec
 * limits join only when they sit near the data; far-off spec limits would squash the series
 * into a flat line, so they are drawn as off-scale labels instead.
 */
export function yExtent(p: Panel): [number, number] {
	const ys = [...p.series, ...(p.second ?? [])].map((s) => s.y);
	for (const l of p.lines) if (l.tone !== 'spec') ys.push(l.value);
	for (const e of p.envelope ?? []) ys.push(e.upper, e.lower);
	const finite = ys.filter(Number.isFinite);
	let lo = finite.length ? Math.min(...finite) : 0;
	let hi = finite.length ? Math.max(...finite) : 1;
	const core = Math.max(hi - lo, Math.abs(hi) * 1e-6, 1e-12);
	for (const l of p.lines) if (l.tone === 'spec' && l.value > lo - core * 0.6 && l.value < hi + core * 0.6) ys.push(l.value);
	lo = Math.min(lo, ...ys.filter(Number.isFinite));
	hi = Math.max(hi, ...ys.filter(Number.isFinite));
	const pad = Math.max(hi - lo, core) * 0.08;
	return [lo - pad, hi + pad];
}

export function xExtent(p: Panel): [number, number] {
	const xs = p.series.map((s) => s.x);
	if (xs.length === 0) return [0, 1];
	const lo = Math.min(...xs);
	const hi = Math.max(...xs);
	return lo === hi ? [lo - 1, hi + 1] : [lo, hi];
}
