// Capability warnings in plain words for the people who act on them.
import type { CapabilityReport, CapabilityWarning } from '$lib/spc/capability';

/** One sentence per warning; the domain's own message is kept for the detail it carries. */
export function warningText(w: CapabilityWarning, r: CapabilityReport): string {
	switch (w.code) {
		case 'FEW_POINTS':
			return `Only ${r.n} points: indices from fewer than 30 points are rough guesses.`;
		case 'FEW_POINTS_FOR_TIGHT_INTERVALS':
			return `${r.n} points: the 95 % intervals are still wide, so judge by their lower ends.`;
		case 'NON_NORMAL':
			return `The values do not look normally distributed (Anderson–Darling p = ${r.normality?.pValue.toPrecision(3) ?? '?'}); Cp, Cpk, Pp and Ppk assume a normal distribution and may mislead.`;
		case 'NORMALITY_NOT_TESTED':
			return `Normality could not be checked (${w.message}); treat the indices with care.`;
		case 'NOT_IN_CONTROL':
			return 'The chart has open alarms: the process is not in statistical control, so these indices do not predict what the line will make.';
		case 'ONE_SIDED_SPEC':
			return 'Only one spec limit: Cp and Pp do not exist; Cpk and Ppk are the one-sided index.';
	}
}
