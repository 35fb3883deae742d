import { describe, expect, test } from 'vitest';
import * as msa from './index';
import { loadExample, num } from './testing/reference-fixtures';

// Reference: Houf & Berman (1988) data, JASP Verification Project ch. 10.1 (ss.rr output):
// %StudyVar(GRR) = 18.97, ndc = 7; shared/reference/msa/gauge-rr-examples.json.
describe('public entry point', () => {
	test('the barrel exposes the analyses and they run end to end', () => {
		const { example, rows } = loadExample('houf-berman-1988-thermal-impedance');
		const anova = msa.gaugeRrAnova(rows);
		if (!anova.ok) throw new Error(anova.error.message);
		const vc = ['sixsigma_ss_rr_output', 'variance_components', 'total_grr', 'pct_study_var'];
		expect(anova.value.components.totalGrr.pctStudyVariation).toBeCloseTo(num(example.published_results, ...vc), 2);
		expect(anova.value.ndc).toBe(num(example.published_results, 'sixsigma_ss_rr_output', 'ndc'));
		expect(msa.anovaComponentBars(anova.value)).toHaveLength(4);
		expect(msa.stationCorrelation(rows).ok).toBe(true);
		expect(msa.averageRangeStudy(rows).ok).toBe(true);
		expect(msa.studyPlots(rows).ok).toBe(true);
	});
});
