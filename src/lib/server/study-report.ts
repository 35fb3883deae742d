// Barlow's Latin subset has no Greek or maths signs: the text spells sigma and <=.
// The PDF report of a finished study, for a station's qualification record: design, verdict per
// characteristic with the bands (common practice), ANOVA table, variance components, the
// average-and-range figures, the range-chart check and the station bias.
import type { MsaVerdict } from '$lib/msa';
import { finish, heading, newDocument, PDF_COLOURS, table } from './pdf';
import type { StudyDetail } from './studies';
import { BAND_LABELS, INTERACTION_ALPHA, type CharacteristicAnalysis } from './study-analysis';

const num = (v: number | null | undefined, digits = 4) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : Number(v.toPrecision(digits)).toString());
const pct = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? '—' : `${v.toFixed(2)} %`);
const pValue = (p: number | null) => (p === null ? '—' : p < 0.0001 ? '< 0.0001' : p.toFixed(4));

function verdictLine(v: MsaVerdict | null): string {
	return v ? BAND_LABELS[v.overall] : 'No verdict (the analysis could not run)';
}

function characteristicSection(doc: ReturnType<typeof newDocument>, c: CharacteristicAnalysis): void {
	const unit = c.unit === 'pF' ? ' (pF)' : '';
	heading(doc, `${c.name}${unit}: ${verdictLine(c.verdict)}`);
	if (!c.anova.ok) {
		doc.text(`ANOVA could not run: ${c.anova.error.message}`);
		return;
	}
	const a = c.anova.value;
	doc.text(c.spec ? `Spec limits ${num(c.spec.lsl)} to ${num(c.spec.usl)}${unit}; tolerance ${num(c.spec.usl - c.spec.lsl)}.` : 'The plan gives no two-sided limits: no % tolerance.');
	for (const reason of a.verdict.reasons) doc.text(`• ${reason}`);
	doc.moveDown(0.3);
	const f = a.full;
	table(
		doc,
		[
			{ header: 'Source', width: 0.28 },
			{ header: 'df', width: 0.1, align: 'right' },
			{ header: 'SS', width: 0.16, align: 'right' },
			{ header: 'MS', width: 0.16, align: 'right' },
			{ header: 'F', width: 0.14, align: 'right' },
			{ header: 'p', width: 0.16, align: 'right' }
		],
		[
			['Part', String(f.part.df), num(f.part.ss), num(f.part.ms), num(f.part.f), pValue(f.part.p)],
			['Station', String(f.appraiser.df), num(f.appraiser.ss), num(f.appraiser.ms), num(f.appraiser.f), pValue(f.appraiser.p)],
			['Part × station', String(f.partXAppraiser.df), num(f.partXAppraiser.ss), num(f.partXAppraiser.ms), num(f.partXAppraiser.f), pValue(f.partXAppraiser.p)],
			['Repeatability', String(f.repeatability.df), num(f.repeatability.ss), num(f.repeatability.ms), '', ''],
			['Total', String(f.total.df), num(f.total.ss), '', '', '']
		]
	);
	doc.text(a.interactionPooled ? `Interaction p > ${INTERACTION_ALPHA}: pooled into repeatability.` : `Interaction p <= ${INTERACTION_ALPHA}: kept in the model.`);
	const comps = a.components;
	const line = (label: string, x: (typeof comps)['totalGrr'] | null) =>
		x ? [label, num(x.variance), pct(x.pctContribution), num(x.stdDev), pct(x.pctStudyVariation), pct(x.pctTolerance)] : [label, 'pooled', '', '', '', ''];
	table(
		doc,
		[
			{ header: 'Component', width: 0.24 },
			{ header: 'Variance', width: 0.15, align: 'right' },
			{ header: '% contribution', width: 0.16, align: 'right' },
			{ header: 'sigma', width: 0.13, align: 'right' },
			{ header: '% study var.', width: 0.16, align: 'right' },
			{ header: '% tolerance', width: 0.16, align: 'right' }
		],
		[
			line('Total gauge R&R', comps.totalGrr),
			line('Repeatability', comps.repeatability),
			line('Reproducibility', comps.reproducibility),
			line('Station', comps.appraiser),
			line('Part × station', comps.partXAppraiser),
			line('Part to part', comps.partToPart),
			line('Total', comps.total)
		]
	);
	doc.text(`Number of distinct categories ndc = ${a.ndc ?? '—'} (1.41 sigma(part)/sigma(GRR), truncated, at least 1).`);
	if (c.averageRange.ok) {
		const ar = c.averageRange.value;
		doc.text(
			`Average and range: EV ${num(ar.ev.sigma)}, AV ${num(ar.av.sigma)}, GRR ${num(ar.grr.sigma)} (${pct(ar.grr.pctTotalVariation)} of total variation), PV ${num(ar.pv.sigma)}; R-double-bar ${num(ar.rBarBar)}, UCL(R) ${num(ar.uclRange)}.`
		);
		doc.text(ar.rangesAboveUcl.length ? `Ranges over UCL(R): ${ar.rangesAboveUcl.map((r) => `${r.part} on ${r.appraiser} (${num(r.range)})`).join(', ')}.` : 'No range exceeds UCL(R).');
	}
	if (c.correlation.ok) {
		table(
			doc,
			[
				{ header: 'Stations', width: 0.3 },
				{ header: 'Bias', width: 0.17, align: 'right' },
				{ header: 'Bias %', width: 0.17, align: 'right' },
				{ header: '95 % CI of bias %', width: 0.22, align: 'right' },
				{ header: 'paired p', width: 0.14, align: 'right' }
			],
			c.correlation.value.pairs.map((b) => [
				`${b.station} − ${b.reference ?? 'all'}`,
				num(b.absolute.mean, 3),
				b.relativePct ? `${b.relativePct.mean.toFixed(3)} %` : '—',
				b.relativePct ? `${b.relativePct.ciLow.toFixed(3)} to ${b.relativePct.ciHigh.toFixed(3)} %` : '—',
				pValue(b.pairedT.p)
			])
		);
	}
}

/** The report's bytes. Assumes a study whose analysis is present (every cell filled). */
export async function studyReportPdf(study: StudyDetail, site: string, now: Date): Promise<Buffer> {
	const doc = newDocument({ title: 'Measurement-system study', subtitle: `${study.name} · ${study.productCode} · study ${study.id}`, site, generatedAt: now });
	const overall = study.analysis?.overall ?? null;
	doc.font('display').fontSize(16).fillColor(overall === 'acceptable' ? PDF_COLOURS.pass : overall === 'conditional' ? PDF_COLOURS.copper : PDF_COLOURS.fail);
	doc.text(`Verdict: ${overall ? BAND_LABELS[overall as keyof typeof BAND_LABELS] : 'none'}`);
	doc.font('body').fontSize(10).fillColor(PDF_COLOURS.ink);
	doc.text(
		`${study.parts} parts × ${study.stations.length} stations (${study.stations.join(', ')}) × ${study.trials} trials; study variation = ${study.multiplier} sigma; plan version ${study.analysis?.planVersion ?? '—'}. Status ${study.status}${study.finishedAt ? `, finished ${study.finishedAt.slice(0, 16).replace('T', ' ')} UTC` : ''}; created by ${study.createdBy ?? '—'}.`
	);
	doc.text('Bands (common practice): % GRR under 10 % good, 10–30 % conditional, over 30 % not acceptable; ndc under 5 not acceptable. The verdict is the worst over the characteristics, each judged by the ANOVA method on % study variation and % tolerance.');
	doc.text('Parts: ' + study.partList.map((p) => `${p.serial} (${p.lot})`).join(', '));
	for (const c of study.analysis?.characteristics ?? []) characteristicSection(doc, c);
	return finish(doc);
}
