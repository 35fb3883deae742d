// Test-side physics, stated independently of the product's code: the ideal tank identity
// f = 1/(2π√(L·C)) with C = C_stray + (C_part in series with C_block).

export const pF = 1e-12;

export type TestFixture = { inductanceH: number; strayF: number; blockingF: number | null; arrangement: 'single' };

/** An abrupt junction (invented part): Cj0 40 pF, Vj 0.75 V, M 0.5, Cp 0.3 pF. */
export const abruptPartF = (biasV: number) => (40 * pF) / Math.sqrt(1 + biasV / 0.75) + 0.3 * pF;

export function resonanceHz(fixture: TestFixture, partF: number): number {
	const branch = fixture.blockingF === null ? partF : (partF * fixture.blockingF) / (partF + fixture.blockingF);
	return 1 / (2 * Math.PI * Math.sqrt(fixture.inductanceH * (fixture.strayF + branch)));
}

/** Reference readings for a calibration with 10, 47, 100 and 220 pF capacitors. */
export function referenceReadings(fixture: TestFixture) {
	return [10, 47, 100, 220].map((c) => ({ capacitanceF: c * pF, resonanceHz: resonanceHz(fixture, c * pF) }));
}
