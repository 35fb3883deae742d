import { describe, expect, test } from 'vitest';
import { buildLayout, mean, requireLevels, sampleVariance } from './design';
import type { MsaRow } from './types';

// The layout is checked against hand-built grids (the expected arrays are written out here).
describe('buildLayout', () => {
	const rows: MsaRow[] = [
		{ part: 'p2', appraiser: 'S1', trial: 2, value: 4 },
		{ part: 'p2', appraiser: 'S1', trial: 1, value: 3 },
		{ part: 'p1', appraiser: 'S1', trial: 1, value: 1 },
		{ part: 'p1', appraiser: 'S1', trial: 2, value: 2 },
		{ part: 'p1', appraiser: 'S2', trial: 1, value: 5 },
		{ part: 'p1', appraiser: 'S2', trial: 2, value: 6 },
		{ part: 'p2', appraiser: 'S2', trial: 1, value: 7 },
		{ part: 'p2', appraiser: 'S2', trial: 2, value: 8 }
	];
	test('first-appearance order for parts and appraisers, ascending trials', () => {
		const r = buildLayout(rows);
		expect(r.ok && r.value).toEqual({
			parts: ['p2', 'p1'],
			appraisers: ['S1', 'S2'],
			trials: [1, 2],
			values: [
				[
					[3, 4],
					[7, 8]
				],
				[
					[1, 2],
					[5, 6]
				]
			]
		});
	});
	test('a missing trial is named; a whole missing cell lists every trial', () => {
		const r = buildLayout(rows.filter((x) => !(x.part === 'p1' && x.appraiser === 'S2')));
		expect(r.ok ? null : r.error).toMatchObject({
			code: 'unbalanced',
			cells: [
				{ part: 'p1', appraiser: 'S2', trial: 1 },
				{ part: 'p1', appraiser: 'S2', trial: 2 }
			]
		});
	});
	test('a trial label used by only one cell makes every other cell incomplete', () => {
		const r = buildLayout([...rows, { part: 'p1', appraiser: 'S1', trial: 3, value: 9 }]);
		expect(r.ok ? null : r.error.cells).toHaveLength(3);
	});
	test('duplicates are named', () => {
		const r = buildLayout([...rows, { part: 'p1', appraiser: 'S2', trial: 2, value: 6.1 }]);
		expect(r.ok ? null : r.error).toMatchObject({
			code: 'duplicate-cell',
			cells: [{ part: 'p1', appraiser: 'S2', trial: 2 }]
		});
	});
	test('rows that are not objects or lack fields are invalid-row (data may come from JSON)', () => {
		const junk = [...rows, null, { part: 'p1', appraiser: 'S1', trial: '1', value: 1 }] as unknown as MsaRow[];
		const r = buildLayout(junk);
		expect(r.ok ? null : r.error).toMatchObject({ code: 'invalid-row', rowIndices: [8, 9] });
	});
	test('requireLevels reports the first unmet minimum', () => {
		const r = buildLayout(rows);
		if (!r.ok) throw new Error('layout failed');
		expect(requireLevels(r.value, { parts: 2, appraisers: 2, trials: 2 }, 'x')).toBeNull();
		expect(requireLevels(r.value, { parts: 3, appraisers: 2, trials: 2 }, 'x')?.code).toBe('too-few-parts');
		expect(requireLevels(r.value, { parts: 2, appraisers: 3, trials: 2 }, 'x')?.code).toBe('too-few-appraisers');
		expect(requireLevels(r.value, { parts: 2, appraisers: 2, trials: 3 }, 'x')?.code).toBe('too-few-trials');
	});
});

// Hand arithmetic: mean of 2, 4, 4, 4, 5, 5, 7, 9 is 5; squared deviations sum to 32,
// so the sample variance is 32 / 7.
describe('mean and sampleVariance', () => {
	test('textbook data set', () => {
		const xs = [2, 4, 4, 4, 5, 5, 7, 9];
		expect(mean(xs)).toBe(5);
		expect(sampleVariance(xs)).toBeCloseTo(32 / 7, 14);
	});
});
