import { describe, expect, test } from 'vitest';
import { gaugeRrAnova } from '$lib/msa';
import { loadExample, num } from '$lib/msa/testing/reference-fixtures';
import { analyseCharacteristic, nextCell, progressGrid, studyCharacteristics, worstOverall } from './study-analysis';
import { rowsOf } from './studies';

const pF = 1e-12;

describe('study characteristics', () => {
	test('C at every plan bias in pF, with both limits as the spec, and the ratio', () => {
		const cs = studyCharacteristics({
			points: [{ biasV: 1, minF: 24 * pF, maxF: 28 * pF }, { biasV: 4, minF: 10 * pF }, { biasV: 25 }],
			ratio: { lowBiasV: 1, highBiasV: 25, min: 3, max: 4.5 }
		});
		expect(cs.map((c) => c.name)).toEqual(['C@1V', 'C@4V', 'C@25V', 'ratio C1/C25']);
		expect(cs[0]?.spec?.lsl).toBeCloseTo(24, 12);
		expect(cs[0]?.spec?.usl).toBeCloseTo(28, 12);
		// One limit alone gives no tolerance.
		expect(cs[1]?.spec).toBeNull();
		expect(cs[3]?.spec).toEqual({ lsl: 3, usl: 4.5 });
		const bias = [1, 4, 25];
		const caps = [26 * pF, 16 * pF, 6.5 * pF];
		expect(cs[0]?.value(bias, caps)).toBeCloseTo(26, 12);
		expect(cs[3]?.value(bias, caps)).toBeCloseTo(4, 12);
		// A sweep without the bias has no value.
		expect(cs[2]?.value([1, 4], [26 * pF, 16 * pF])).toBeNull();
		expect(cs[0]?.value(bias, [null, 16 * pF, 6.5 * pF])).toBeNull();
	});
});

describe('next cell and progress', () => {
	const serials = ['P1', 'P2', 'P3'];
	test('trial by trial: every part once per round, then the next round; null when done', () => {
		expect(nextCell(serials, 2, new Map())).toEqual({ serial: 'P1', trial: 1 });
		expect(nextCell(serials, 2, new Map([['P1', 1]]))).toEqual({ serial: 'P2', trial: 1 });
		expect(nextCell(serials, 2, new Map([['P1', 1], ['P2', 1], ['P3', 1]]))).toEqual({ serial: 'P1', trial: 2 });
		expect(nextCell(serials, 2, new Map([['P1', 2], ['P2', 1], ['P3', 1]]))).toEqual({ serial: 'P2', trial: 2 });
		expect(nextCell(serials, 2, new Map([['P1', 2], ['P2', 2], ['P3', 2]]))).toBeNull();
		expect(nextCell([], 3, new Map())).toBeNull();
	});
	test('the grid has parts × stations × trials cells and marks the stored ones', () => {
		const p = progressGrid(serials, ['S1', 'S2'], 3, [
			{ serial: 'P1', station: 'S1', trial: 1 },
			{ serial: 'P3', station: 'S2', trial: 3 }
		]);
		expect(p.total).toBe(18);
		expect(p.filled).toBe(2);
		expect(p.cells.filter((c) => c.filled).map((c) => `${c.serial}/${c.station}/${c.trial}`)).toEqual(['P1/S1/1', 'P3/S2/3']);
	});
});

describe('worst verdict', () => {
	test('not acceptable beats indeterminate beats conditional beats good; none gives null', () => {
		expect(worstOverall(['acceptable', 'conditional'])).toBe('conditional');
		expect(worstOverall(['acceptable', 'indeterminate', 'conditional'])).toBe('indeterminate');
		expect(worstOverall(['indeterminate', 'not-acceptable'])).toBe('not-acceptable');
		expect(worstOverall([])).toBeNull();
	});
});

describe('a characteristic analysed through the msa core', () => {
	// Houf & Berman (1988) thermal-impedance data, 10 parts × 3 operators × 3 trials, as in
	// tests/reference/msa/gauge-rr-examples.json (published: ndc = 7, %StudyVar GRR 18.97).
	const { example, rows } = loadExample('houf-berman-1988-thermal-impedance');

	test('the study rows go through unchanged: the same ANOVA as the library, the published ndc', () => {
		const stored = rows.map((r) => ({ serial: r.part, station: r.appraiser, trial: r.trial, bias_v: [1], capacitance_f: [r.value * pF] }));
		const serials = [...new Set(rows.map((r) => r.part))];
		const stations = [...new Set(rows.map((r) => r.appraiser))];
		// Shuffled storage order: rowsOf puts them back in study order.
		const shuffled = [...stored].reverse();
		const c = studyCharacteristics({ points: [{ biasV: 1 }] })[0];
		if (!c) throw new Error('no characteristic');
		const studyRows = rowsOf(shuffled, serials, stations, c.value);
		const a = analyseCharacteristic({ name: c.name, unit: c.unit, spec: null }, studyRows, 6);
		const direct = gaugeRrAnova(rows, { alpha: 0.05 });
		if (!a.anova.ok || !direct.ok) throw new Error('analysis failed');
		expect(a.anova.value.components.totalGrr.pctStudyVariation).toBeCloseTo(direct.value.components.totalGrr.pctStudyVariation, 9);
		expect(a.anova.value.design.parts).toEqual(serials);
		expect(a.anova.value.ndc).toBe(num(example.published_results, 'sixsigma_ss_rr_output', 'ndc'));
		expect(a.verdict).toEqual(a.anova.value.verdict);
		expect(a.averageRange.ok && a.correlation.ok && a.plots.ok).toBe(true);
		expect(a.anovaBars).toHaveLength(4);
		expect(a.rangeChart?.parts).toEqual(serials);
	});

	test('an incomplete grid is refused by the library, not analysed', () => {
		const c = { name: 'C@1V', unit: 'pF' as const, spec: null };
		const a = analyseCharacteristic(c, rows.slice(1), 6);
		expect(a.anova.ok).toBe(false);
		expect(a.verdict).toBeNull();
		expect(a.rangeChart).toBeNull();
	});
});
