/**
 * Levenberg–Marquardt for the engine's few parameters (Nocedal & Wright, Numerical Optimization,
 * §10.3; Marquardt's scaling of the damping by diag(JᵀJ)). Kept here rather than taken from a
 * package because the calibration needs a convergence test on the step (so a fit takes a handful of
 * iterations, not a fixed count) and the final JᵀJ for the covariance.
 */
export type LeastSquaresFit = { p: number[]; jtj: number[][]; cost: number; iterations: number };

export function fitLeastSquares(
  residuals: (p: readonly number[]) => number[],
  p0: readonly number[],
  opts: { lo: readonly number[]; hi: readonly number[]; step: readonly number[]; maxIterations?: number; tol?: number },
): LeastSquaresFit {
  const m = p0.length;
  const clamp = (p: number[]) => p.map((v, i) => Math.min(opts.hi[i], Math.max(opts.lo[i], v)));
  const sq = (r: number[]) => r.reduce((a, v) => a + v * v, 0);
  const jacobian = (p: number[], r: number[]) => {
    const cols: number[][] = [];
    for (let j = 0; j < m; j++) {
      const q = p.slice();
      // Step inwards at a bound so the difference stays inside the box.
      const h = q[j] + opts.step[j] > opts.hi[j] ? -opts.step[j] : opts.step[j];
      q[j] += h;
      const rq = residuals(q);
      cols.push(rq.map((v, i) => (v - r[i]) / h));
    }
    return cols;
  };
  const normal = (cols: number[][], r: number[]) => {
    const a = cols.map((ci) => cols.map((cj) => ci.reduce((s, v, k) => s + v * cj[k], 0)));
    const g = cols.map((ci) => ci.reduce((s, v, k) => s + v * r[k], 0));
    return { a, g };
  };

  let p = clamp([...p0]);
  let r = residuals(p);
  let cost = sq(r);
  let lambda = 1e-3;
  let cols = jacobian(p, r);
  // Whether cols is the jacobian at p (a refused step leaves both as they were).
  let colsCurrent = true;
  let iterations = 0;
  const maxIterations = opts.maxIterations ?? 30;
  const tol = opts.tol ?? 1e-6;
  for (; iterations < maxIterations; iterations++) {
    const { a, g } = normal(cols, r);
    const damped = a.map((row, i) => row.map((v, j) => (i === j ? v + lambda * Math.max(v, 1e-12) : v)));
    const delta = solveSmall(damped, g.map((v) => -v));
    const next = clamp(p.map((v, i) => v + delta[i]));
    const rn = residuals(next);
    const cn = sq(rn);
    const moved = Math.max(...next.map((v, i) => Math.abs(v - p[i])));
    if (cn < cost) {
      const gain = cost - cn;
      p = next;
      r = rn;
      cost = cn;
      lambda = Math.max(lambda / 3, 1e-9);
      colsCurrent = false;
      if (moved < tol || gain < 1e-12 * (1 + cost)) break;
      cols = jacobian(p, r);
      colsCurrent = true;
    } else {
      lambda *= 4;
      if (lambda > 1e10 || moved < tol) break;
    }
  }
  const final = normal(colsCurrent ? cols : jacobian(p, r), r);
  return { p, jtj: final.a, cost, iterations };
}

/** Gaussian elimination with partial pivoting for the 1–3 unknowns used here. */
export function solveSmall(a: number[][], b: number[]): number[] {
  const n = b.length;
  const m = a.map((row, i) => [...row, b[i]]);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r][c]) > Math.abs(m[piv][c])) piv = r;
    [m[c], m[piv]] = [m[piv], m[c]];
    const d = m[c][c] || 1e-300;
    for (let r = c + 1; r < n; r++) {
      const f = m[r][c] / d;
      for (let k = c; k <= n; k++) m[r][k] -= f * m[c][k];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r][n];
    for (let k = r + 1; k < n; k++) s -= m[r][k] * x[k];
    x[r] = s / (m[r][r] || 1e-300);
  }
  return x;
}

/** Inverse of a symmetric 1×1 or 2×2 matrix (the covariance from JᵀJ). */
export function invertSmall(a: number[][]): number[][] {
  if (a.length === 1) return [[1 / a[0][0]]];
  const det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
  return [
    [a[1][1] / det, -a[0][1] / det],
    [-a[1][0] / det, a[0][0] / det],
  ];
}
