// Plot model of the C–V overlay: axis transforms (linear or base-10 log), extents and ticks.
// Pure: the component turns these into SVG with Layer Cake's linear scales over the transformed
// values, so a log axis is a linear scale over log10 of the data.

export type CvCurve = { id: string; biasV: number[]; capacitancePf: (number | null)[]; pass: boolean };
export type CvWindow = { biasV: number; lowPf: number | null; highPf: number | null };
export type AxisScale = 'linear' | 'log';

/** The plotted coordinate of a value; null when it cannot be shown (non-finite, or ≤ 0 on a log axis). */
export function toAxis(v: number | null | undefined, scale: AxisScale): number | null {
	if (v === null || v === undefined || !Number.isFinite(v)) return null;
	if (scale === 'log') return v > 0 ? Math.log10(v) : null;
	return v;
}

/** One curve as plotted points (points that cannot be shown are left out, splitting nothing). */
export function curvePoints(c: CvCurve, scale: AxisScale): { x: number; y: number }[] {
	const out: { x: number; y: number }[] = [];
	c.biasV.forEach((v, i) => {
		const x = toAxis(v, scale);
		const y = toAxis(c.capacitancePf[i] ?? null, scale);
		if (x !== null && y !== null) out.push({ x, y });
	});
	return out;
}

/** Extent of all curves and window limits in plotted units, padded by 5 % (log: of a decade span). */
export function cvExtent(curves: CvCurve[], windows: CvWindow[], scale: AxisScale): { x: [number, number]; y: [number, number] } | null {
	const xs: number[] = [];
	const ys: number[] = [];
	for (const c of curves) for (const p of curvePoints(c, scale)) (xs.push(p.x), ys.push(p.y));
	for (const w of windows) {
		const x = toAxis(w.biasV, scale);
		if (x === null) continue;
		xs.push(x);
		for (const v of [w.lowPf, w.highPf]) {
			const y = toAxis(v, scale);
			if (y !== null) ys.push(y);
		}
	}
	if (!xs.length || !ys.length) return null;
	const pad = (lo: number, hi: number): [number, number] => {
		const span = hi - lo || Math.abs(hi) || 1;
		return [lo - 0.05 * span, hi + 0.05 * span];
	};
	return { x: pad(Math.min(...xs), Math.max(...xs)), y: pad(Math.min(...ys), Math.max(...ys)) };
}

/** "Nice" linear ticks (steps of 1, 2 or 5 × 10^k) covering [lo, hi], about `count` of them. */
export function linearTicks(lo: number, hi: number, count = 5): number[] {
	if (!(hi > lo) || !Number.isFinite(lo) || !Number.isFinite(hi)) return Number.isFinite(lo) ? [lo] : [];
	const raw = (hi - lo) / Math.max(1, count);
	const mag = 10 ** Math.floor(Math.log10(raw));
	// the 1-2-5 step whose tick count comes nearest the wish
	const span = hi - lo;
	const want = Math.max(1, count);
	const step = [1, 2, 5, 10].map((m) => m * mag).reduce((best, s) => (Math.abs(span / s - want) < Math.abs(span / best - want) ? s : best));
	const out: number[] = [];
	for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) out.push(Number(t.toPrecision(12)));
	return out;
}

/** Ticks of a log axis in data units: 1, 2, 5 × 10^k inside [10^lo, 10^hi] (only decades when that is many). */
export function logTicks(lo: number, hi: number): number[] {
	if (!(hi > lo)) return [];
	const mult = hi - lo > 3 ? [1] : [1, 2, 5];
	const out: number[] = [];
	for (let k = Math.floor(lo); k <= Math.ceil(hi); k++) {
		for (const m of mult) {
			const v = m * 10 ** k;
			const t = Math.log10(v);
			if (t >= lo - 1e-9 && t <= hi + 1e-9) out.push(Number(v.toPrecision(12)));
		}
	}
	return out;
}

/** Ticks for one axis: values in data units with their plotted positions. */
export function axisTicks(domain: [number, number], scale: AxisScale, count = 5): { value: number; at: number }[] {
	if (scale === 'log') return logTicks(domain[0], domain[1]).map((v) => ({ value: v, at: Math.log10(v) }));
	return linearTicks(domain[0], domain[1], count).map((v) => ({ value: v, at: v }));
}
