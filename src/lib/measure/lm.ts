/**
 * Levenberg-Marquardt least squares of our own (Moré 1978 scaling, Nielsen's damping update),
 * solving each damped step as the augmented least-squares problem [J; sqrt(mu) D] d = [-r; 0]
 * by Householder QR instead of forming J^T J, which keeps ill-conditioned problems accurate.
 *
 * Why not ml-levenberg-marquardt: with its defaults it stops far from the NIST StRD certified
 * values on Misra1a and Chwirut2 (see lm.test.ts); it reaches them only with tuned options and
 * then runs to its iteration cap, because it has no convergence test on the step or the gradient.
 */

export type LmProblem = {
	/** residuals r(p) (model minus data), all finite for a usable p */
	residuals: (p: readonly number[]) => number[];
	/** Jacobian dr/dp, one row per residual; central differences when omitted */
	jacobian?: (p: readonly number[]) => number[][];
	initial: readonly number[];
	maxIterations?: number;
	/** relative tolerance on the reduction of the sum and on the step (default 1e-15) */
	relTolerance?: number;
	/** starting damping relative to the largest scaled curvature (Nielsen's tau; default 1e-3, 1e-6 for a good start) */
	initialDamping?: number;
};

export type LmResult =
	| { ok: true; params: number[]; sumSquares: number; iterations: number; converged: boolean }
	| { ok: false; reason: 'non-finite-start' | 'non-finite-jacobian'; iterations: number };

function sumSq(r: readonly number[]): number {
	let s = 0;
	for (const v of r) s += v * v;
	return s;
}

function allFinite(r: readonly number[]): boolean {
	for (const v of r) if (!Number.isFinite(v)) return false;
	return true;
}

function numericJacobian(f: (p: readonly number[]) => number[], p: readonly number[]): number[][] {
	const cols: number[][] = [];
	for (let j = 0; j < p.length; j++) {
		const pj = p[j] ?? 0;
		const h = 1e-6 * Math.max(Math.abs(pj), 1e-8);
		const up = p.slice();
		const dn = p.slice();
		up[j] = pj + h;
		dn[j] = pj - h;
		const ru = f(up);
		const rd = f(dn);
		cols.push(ru.map((v, i) => (v - (rd[i] ?? 0)) / (2 * h)));
	}
	const n = cols[0]?.length ?? 0;
	const rows: number[][] = [];
	for (let i = 0; i < n; i++) rows.push(cols.map((c) => c[i] ?? 0));
	return rows;
}

/**
 * Least-squares solution of A x = b for a tall A (m x n, m >= n) by Householder QR.
 * A is given row-major as a flat array and is overwritten.
 */
function qrSolve(a: Float64Array, b: Float64Array, m: number, n: number): Float64Array | null {
	for (let k = 0; k < n; k++) {
		let norm = 0;
		for (let i = k; i < m; i++) {
			const v = a[i * n + k] ?? 0;
			norm += v * v;
		}
		norm = Math.sqrt(norm);
		if (norm === 0) return null;
		const akk = a[k * n + k] ?? 0;
		const alpha = akk > 0 ? -norm : norm;
		// v = x - alpha e1, stored in column k below the diagonal
		a[k * n + k] = akk - alpha;
		let vnorm2 = 0;
		for (let i = k; i < m; i++) {
			const v = a[i * n + k] ?? 0;
			vnorm2 += v * v;
		}
		if (vnorm2 === 0) return null;
		for (let j = k + 1; j < n; j++) {
			let dot = 0;
			for (let i = k; i < m; i++) dot += (a[i * n + k] ?? 0) * (a[i * n + j] ?? 0);
			const s = (2 * dot) / vnorm2;
			for (let i = k; i < m; i++) a[i * n + j] = (a[i * n + j] ?? 0) - s * (a[i * n + k] ?? 0);
		}
		let dotb = 0;
		for (let i = k; i < m; i++) dotb += (a[i * n + k] ?? 0) * (b[i] ?? 0);
		const sb = (2 * dotb) / vnorm2;
		for (let i = k; i < m; i++) b[i] = (b[i] ?? 0) - sb * (a[i * n + k] ?? 0);
		a[k * n + k] = alpha;
	}
	const x = new Float64Array(n);
	for (let k = n - 1; k >= 0; k--) {
		let s = b[k] ?? 0;
		for (let j = k + 1; j < n; j++) s -= (a[k * n + j] ?? 0) * (x[j] ?? 0);
		const d = a[k * n + k] ?? 0;
		if (d === 0) return null;
		x[k] = s / d;
	}
	return x;
}

/**
 * Minimises sum r_i(p)^2 from the given start. Assumes residuals and Jacobian are finite near the
 * path; a step into a non-finite region is rejected like any step that does not reduce the sum.
 * Stops when the relative reduction of the sum (actual and predicted) is below relTolerance
 * (default 1e-15), the relative scaled step below 100 relTolerance, the scaled gradient below
 * 1e-15, or at maxIterations (default 2000; converged false then).
 */
export function levenbergMarquardt(problem: LmProblem): LmResult {
	const maxIterations = problem.maxIterations ?? 2000;
	const tol = problem.relTolerance ?? 1e-15;
	const jac = problem.jacobian ?? ((p: readonly number[]) => numericJacobian(problem.residuals, p));
	let p = problem.initial.slice();
	let r = problem.residuals(p);
	if (!allFinite(p) || !allFinite(r)) return { ok: false, reason: 'non-finite-start', iterations: 0 };
	const n = p.length;
	const m = r.length;
	let s = sumSq(r);
	let mu = -1;
	let nu = 2;
	const diag = new Float64Array(n);
	let iterations = 0;
	let converged = s === 0;
	let newJacobian = true;
	let jRows: number[][] = [];
	let g = new Float64Array(n);
	const rowsA = m + n;
	const a = new Float64Array(rowsA * n);
	const b = new Float64Array(rowsA);
	while (!converged && iterations < maxIterations) {
		iterations++;
		if (newJacobian) {
			jRows = jac(p);
			for (const row of jRows) {
				if (!allFinite(row)) return { ok: false, reason: 'non-finite-jacobian', iterations };
			}
			g = new Float64Array(n);
			for (let j = 0; j < n; j++) {
				let colNorm2 = 0;
				let gj = 0;
				for (let i = 0; i < m; i++) {
					const jij = jRows[i]?.[j] ?? 0;
					colNorm2 += jij * jij;
					gj += jij * (r[i] ?? 0);
				}
				g[j] = gj;
				// Moré's scaling: the largest column norm seen so far
				diag[j] = Math.max(diag[j] ?? 0, Math.sqrt(colNorm2));
			}
			if (mu < 0) {
				let maxD = 0;
				for (const d of diag) maxD = Math.max(maxD, d * d);
				mu = (problem.initialDamping ?? 1e-3) * (maxD > 0 ? maxD : 1);
			}
			let gScaled = 0;
			for (let j = 0; j < n; j++) {
				const d = diag[j] ?? 0;
				if (d > 0) gScaled = Math.max(gScaled, Math.abs(g[j] ?? 0) / (d * Math.sqrt(s) + 1e-300));
			}
			if (gScaled < 1e-15) {
				converged = true;
				break;
			}
			newJacobian = false;
		}
		a.fill(0);
		b.fill(0);
		for (let i = 0; i < m; i++) {
			const row = jRows[i];
			for (let j = 0; j < n; j++) a[i * n + j] = row?.[j] ?? 0;
			b[i] = -(r[i] ?? 0);
		}
		const sqrtMu = Math.sqrt(mu);
		for (let j = 0; j < n; j++) a[(m + j) * n + j] = sqrtMu * Math.max(diag[j] ?? 0, 1e-300);
		const step = qrSolve(a, b, rowsA, n);
		if (step === null) {
			mu *= nu;
			nu *= 2;
			continue;
		}
		let stepNorm = 0;
		let pNorm = 0;
		let predicted = 0;
		for (let j = 0; j < n; j++) {
			const dj = step[j] ?? 0;
			const dd = (diag[j] ?? 0) * dj;
			stepNorm += dd * dd;
			const dp = (diag[j] ?? 0) * (p[j] ?? 0);
			pNorm += dp * dp;
			predicted += mu * dd * dd - dj * (g[j] ?? 0);
		}
		const trial = p.map((v, j) => v + (step[j] ?? 0));
		const rTrial = problem.residuals(trial);
		const sTrial = allFinite(rTrial) && allFinite(trial) ? sumSq(rTrial) : Number.POSITIVE_INFINITY;
		const actual = s - sTrial;
		const rho = predicted > 0 ? actual / predicted : -1;
		if (rho > 0) {
			p = trial;
			r = rTrial;
			s = sTrial;
			mu *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3);
			nu = 2;
			newJacobian = true;
			if (s === 0 || (actual <= tol * s && predicted <= tol * s)) converged = true;
		} else {
			mu *= nu;
			nu *= 2;
		}
		if (Math.sqrt(stepNorm) <= 100 * tol * Math.sqrt(pNorm)) converged = true;
		if (!Number.isFinite(mu) || mu > 1e300) break;
	}
	return { ok: true, params: p, sumSquares: s, iterations, converged };
}
