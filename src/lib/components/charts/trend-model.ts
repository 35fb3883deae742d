// Station trends → chart panels (the same Panel shape the control charts draw): fitted inductance
// and stray capacitance per calibration, and each reference-part chart with its frozen limits.
import { dateTime } from '$lib/format';
import type { StationTrends } from '$lib/server/station-view';
import type { Panel, RefLine } from './model';

const small = { bands: [], size: 'small' as const };

/** L (µH) and stray (pF), one point per calibration, numbered from the oldest shown. */
export function calibrationPanels(cals: StationTrends['calibrations']): Panel[] {
	const base = { xLabel: 'calibration number', noun: 'calibrations', lines: [] as RefLine[], ...small };
	return [
		{
			...base,
			id: 'trend-inductance',
			title: 'Tank inductance L',
			unit: 'µH',
			series: cals.map((c, i) => ({ x: i + 1, y: c.inductanceH * 1e6, title: `Calibration ${dateTime(c.at)} · residual ${c.residualPpm.toFixed(1)} ppm`, at: c.at, rules: [] }))
		},
		{
			...base,
			id: 'trend-stray',
			title: 'Stray capacitance',
			unit: 'pF',
			series: cals.map((c, i) => ({ x: i + 1, y: c.strayF * 1e12, title: `Calibration ${dateTime(c.at)} · residual ${c.residualPpm.toFixed(1)} ppm`, at: c.at, rules: [] }))
		}
	];
}

/** One panel per reference-part chart: its newest points with CL, UCL and LCL once frozen. */
export function referencePanels(reference: StationTrends['reference']): Panel[] {
	return reference.map((r) => ({
		id: `reference-${r.chartId}`,
		title: `${r.productCode} reference · ${r.characteristic}`,
		unit: r.unit,
		xLabel: 'point number',
		noun: 'points',
		series: r.points.map((p) => ({ x: p.seq, y: p.value, title: `Point ${p.seq}`, serial: p.serial, at: p.at, rules: p.rules, unitId: p.unitId })),
		lines: r.limits
			? [
					{ value: r.limits.centerLine, label: 'CL', tone: 'center' as const },
					{ value: r.limits.upperControlLimit, label: 'UCL', tone: 'limit' as const },
					{ value: r.limits.lowerControlLimit, label: 'LCL', tone: 'limit' as const }
				]
			: [],
		...small
	}));
}

/**
 * A y range at least `minRelative` of the values' magnitude wide, so a flat trend reads as flat
 * instead of magnifying rounding (our choice: 0.5 % for L and stray, 0.2 % for reference charts).
 */
export function trendDomain(p: Panel, minRelative: number): [number, number] | undefined {
	const ys = [...p.series.map((s) => s.y), ...p.lines.map((l) => l.value)].filter(Number.isFinite);
	if (ys.length === 0) return undefined;
	const lo = Math.min(...ys);
	const hi = Math.max(...ys);
	const mid = (lo + hi) / 2;
	const half = Math.max((hi - lo) * 0.58, (Math.abs(mid) * minRelative) / 2);
	return [mid - half, mid + half];
}
