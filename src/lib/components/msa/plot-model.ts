// Plot series of a study for the Layer Cake plots: categories along x (parts, stations or
// variance sources), dots, lines and grouped bars in y. Built from $lib/msa's plot data.
import type { ComponentBar, RangeChart, StudyPlots } from '$lib/msa';

export type PlotSpec = {
	id: string;
	title: string;
	yLabel: string;
	categories: string[];
	dots: { x: number; y: number; series: number; title: string }[];
	lines: { name: string; ys: number[]; dashed?: boolean }[];
	bars: { name: string; ys: (number | null)[] }[];
	hlines: { label: string; y: number }[];
	legend: string[];
};

const empty = (id: string, title: string, yLabel: string, categories: string[]): PlotSpec => ({ id, title, yLabel, categories, dots: [], lines: [], bars: [], hlines: [], legend: [] });

/** Every measurement by part (dots per station) with the part means joined. */
export function byPartPlot(p: StudyPlots, unit: string): PlotSpec {
	const stations = p.byAppraiser.map((a) => a.appraiser);
	const spec = empty('by-part', 'Measurements by part', unit ? `value (${unit})` : 'value', p.byPart.map((x) => x.part.slice(-6)));
	spec.dots = p.byPart.flatMap((part, i) =>
		part.points.map((pt) => ({ x: i, y: pt.value, series: stations.indexOf(pt.appraiser), title: `${part.part} · ${pt.appraiser} · trial ${pt.trial}: ${pt.value}` }))
	);
	spec.lines = [{ name: 'part mean', ys: p.byPart.map((x) => x.mean), dashed: true }];
	spec.legend = stations;
	return spec;
}

/** Every measurement by station with the station means joined. */
export function byStationPlot(p: StudyPlots, unit: string): PlotSpec {
	const spec = empty('by-station', 'Measurements by station', unit ? `value (${unit})` : 'value', p.byAppraiser.map((a) => a.appraiser));
	spec.dots = p.byAppraiser.flatMap((a, i) => a.points.map((pt) => ({ x: i, y: pt.value, series: i, title: `${a.appraiser} · ${pt.part} · trial ${pt.trial}: ${pt.value}` })));
	spec.lines = [{ name: 'station mean', ys: p.byAppraiser.map((a) => a.mean), dashed: true }];
	return spec;
}

/** Mean of the trials per part, one line per station: parallel lines mean no interaction. */
export function interactionPlot(p: StudyPlots, unit: string): PlotSpec {
	const spec = empty('interaction', 'Part × station interaction', unit ? `mean (${unit})` : 'mean', p.interaction.parts.map((x) => x.slice(-6)));
	spec.lines = p.interaction.series.map((s) => ({ name: s.appraiser, ys: s.means }));
	spec.legend = p.interaction.series.map((s) => s.appraiser);
	return spec;
}

const SOURCE_LABELS = { totalGrr: 'Gauge R&R', repeatability: 'Repeatability', reproducibility: 'Reproducibility', partToPart: 'Part to part' } as const;

/** Components of variation: % contribution, % study variation and % tolerance per source. */
export function componentsPlot(bars: ComponentBar[]): PlotSpec {
	const spec = empty('components', 'Components of variation', '%', bars.map((b) => SOURCE_LABELS[b.source]));
	spec.bars = [
		{ name: '% contribution', ys: bars.map((b) => b.pctContribution) },
		{ name: '% study variation', ys: bars.map((b) => b.pctStudyVariation) },
		{ name: '% tolerance', ys: bars.map((b) => b.pctTolerance) }
	];
	spec.legend = spec.bars.map((b) => b.name);
	return spec;
}

/** The range chart: cell ranges per station along the parts, centre line and UCL. */
export function rangePlot(r: RangeChart, unit: string): PlotSpec {
	const spec = empty('ranges', 'Range chart of the cells', unit ? `range (${unit})` : 'range', r.parts.map((x) => x.slice(-6)));
	spec.lines = r.series.map((s) => ({ name: s.appraiser, ys: s.ranges }));
	spec.hlines = [
		{ label: 'R̄̄', y: r.centreLine },
		{ label: 'UCL', y: r.upperLimit }
	];
	spec.legend = r.series.map((s) => s.appraiser);
	return spec;
}

/** y extent of a plot with 8 % headroom; bars start at 0. */
export function yDomain(s: PlotSpec): [number, number] {
	const ys = [...s.dots.map((d) => d.y), ...s.lines.flatMap((l) => l.ys), ...s.bars.flatMap((b) => b.ys.filter((y): y is number => y !== null)), ...s.hlines.map((h) => h.y)].filter(Number.isFinite);
	if (s.bars.length) ys.push(0);
	if (ys.length === 0) return [0, 1];
	const lo = Math.min(...ys);
	const hi = Math.max(...ys);
	const pad = (hi - lo || Math.abs(hi) || 1) * 0.08;
	return [s.bars.length ? 0 : lo - pad, hi + pad];
}
