/**
 * A small weighted Levenberg–Marquardt solver (numerical Jacobian, box bounds by projection)
 * for fits of a handful of parameters; the normal equations are solved by Cholesky.
 */

export interface LeastSquaresProblem {
  /** Residuals for a parameter vector; a non-finite residual rejects the step. */
  residuals(theta: readonly number[]): Float64Array;
  lower: readonly number[];
  upper: readonly number[];
  /** Per-residual weights (robust reweighting); default all 1. */
  weights?: Float64Array;
}

export interface LeastSquaresResult {
  theta: number[];
  /** Weighted sum of squared residuals at theta. */
  cost: number;
  iterations: number;
}

function clampTo(theta: number[], lo: readonly number[], hi: readonly number[]): number[] {
  return theta.map((v, k) => Math.min(hi[k], Math.max(lo[k], v)));
}

function weightedCost(r: Float64Array, w: Float64Array | undefined): number {
  let s = 0;
  for (let i = 0; i < r.length; i++) {
    const v = r[i];
    if (!Number.isFinite(v)) return Infinity;
    s += (w ? w[i] : 1) * v * v;
  }
  return s;
}

/** Solves (A) x = b for a small symmetric positive definite A; null when it is not. */
function choleskySolve(a: number[][], b: number[]): number[] | null {
  const n = b.length;
  const l = a.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i][j];
      for (let k = 0; k < j; k++) s -= l[i][k] * l[j][k];
      if (i === j) {
        if (!(s > 0)) return null;
        l[i][i] = Math.sqrt(s);
      } else l[i][j] = s / l[j][j];
    }
  }
  const y = new Array<number>(n).fill(0);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= l[i][k] * y[k];
    y[i] = s / l[i][i];
  }
  const x = new Array<number>(n).fill(0);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= l[k][i] * x[k];
    x[i] = s / l[i][i];
  }
  return x;
}

export function levenbergMarquardt(
  problem: LeastSquaresProblem,
  start: readonly number[],
  maxIterations = 200,
): LeastSquaresResult {
  const { lower, upper, weights } = problem;
  const n = start.length;
  let theta = clampTo([...start], lower, upper);
  let r = problem.residuals(theta);
  let cost = weightedCost(r, weights);
  let lambda = 1e-3;
  let it = 0;
  for (; it < maxIterations && Number.isFinite(cost); it++) {
    // Forward-difference Jacobian, stepping inward at an upper bound.
    const jac: Float64Array[] = [];
    for (let k = 0; k < n; k++) {
      const h = 1e-6 * Math.max(Math.abs(theta[k]), 1e-6 * (upper[k] - lower[k]), 1e-12);
      const step = theta[k] + h > upper[k] ? -h : h;
      const t2 = [...theta];
      t2[k] += step;
      const r2 = problem.residuals(t2);
      const col = new Float64Array(r.length);
      for (let i = 0; i < r.length; i++) col[i] = (r2[i] - r[i]) / step;
      jac.push(col);
    }
    const jtj = Array.from({ length: n }, () => new Array<number>(n).fill(0));
    const jtr = new Array<number>(n).fill(0);
    for (let i = 0; i < r.length; i++) {
      const w = weights ? weights[i] : 1;
      if (w === 0) continue;
      for (let a = 0; a < n; a++) {
        const ja = jac[a][i] * w;
        jtr[a] += ja * r[i];
        for (let b = 0; b <= a; b++) jtj[a][b] += ja * jac[b][i];
      }
    }
    for (let a = 0; a < n; a++) for (let b = 0; b < a; b++) jtj[b][a] = jtj[a][b];
    let improved = false;
    for (let tries = 0; tries < 12; tries++) {
      const damped = jtj.map((row, a) => row.map((v, b) => (a === b ? v + lambda * (v || 1e-30) : v)));
      const delta = choleskySolve(
        damped,
        jtr.map((v) => -v),
      );
      if (delta) {
        const next = clampTo(
          theta.map((v, k) => v + delta[k]),
          lower,
          upper,
        );
        const rNext = problem.residuals(next);
        const costNext = weightedCost(rNext, weights);
        if (costNext < cost) {
          const gain = (cost - costNext) / Math.max(cost, 1e-300);
          theta = next;
          r = rNext;
          cost = costNext;
          lambda = Math.max(lambda / 5, 1e-12);
          improved = true;
          if (gain < 1e-10) return { theta, cost, iterations: it + 1 };
          break;
        }
      }
      lambda *= 8;
    }
    if (!improved) break;
  }
  return { theta, cost, iterations: it };
}
