/**
 * The fallback when the points do not follow one single-diode curve (a partly shaded panel,
 * two panels in parallel, a source that is no panel): robust local quadratic regression of
 * P on V (LOESS with tricube weights and bisquare robustness rounds, as in Cleveland 1979).
 */
import { bisquareWeights, madSigma, quantile, rms } from './robust';
import type { FittedCurve, SweepPoint } from './types';

export interface SmoothFit extends FittedCurve {
  model: 'smooth';
}

/** Share of the points in each local window (Cleveland's span); a choice of this project. */
const SPAN = 0.12;
const ROBUST_ROUNDS = 2;
/** Grid the curve is tabulated on, then interpolated linearly. */
const GRID = 240;

interface Sorted {
  v: Float64Array;
  p: Float64Array;
}

/** Local weighted quadratic at x over the k nearest points (in the V-sorted arrays). */
function localQuadratic(s: Sorted, robustW: Float64Array, x: number, k: number): number {
  const n = s.v.length;
  // Nearest k by voltage: grow a window from the insertion point.
  let lo = lowerBound(s.v, x);
  let hi = lo;
  while (hi - lo < k) {
    if (lo > 0 && (hi >= n || x - s.v[lo - 1] <= s.v[hi] - x)) lo--;
    else hi++;
  }
  const h = Math.max(x - s.v[lo], s.v[hi - 1] - x) * 1.0001 || 1e-9;
  // Weighted sums for the 3x3 normal equations in u = v - x.
  let s0 = 0,
    s1 = 0,
    s2 = 0,
    s3 = 0,
    s4 = 0,
    t0 = 0,
    t1 = 0,
    t2 = 0;
  for (let j = lo; j < hi; j++) {
    const u = s.v[j] - x;
    const d = Math.abs(u) / h;
    const w = (1 - d * d * d) ** 3 * robustW[j];
    if (w <= 0) continue;
    const u2 = u * u;
    s0 += w;
    s1 += w * u;
    s2 += w * u2;
    s3 += w * u2 * u;
    s4 += w * u2 * u2;
    t0 += w * s.p[j];
    t1 += w * u * s.p[j];
    t2 += w * u2 * s.p[j];
  }
  // Intercept of the quadratic by Cramer's rule; fall back to a local line, then the mean.
  const det = s0 * (s2 * s4 - s3 * s3) - s1 * (s1 * s4 - s3 * s2) + s2 * (s1 * s3 - s2 * s2);
  if (Math.abs(det) > 1e-12 * Math.max(1, s0 * s2 * s4)) {
    return (t0 * (s2 * s4 - s3 * s3) - s1 * (t1 * s4 - s3 * t2) + s2 * (t1 * s3 - s2 * t2)) / det;
  }
  const det2 = s0 * s2 - s1 * s1;
  if (Math.abs(det2) > 1e-12) return (t0 * s2 - s1 * t1) / det2;
  return s0 > 0 ? t0 / s0 : NaN;
}

function lowerBound(a: Float64Array, x: number): number {
  let lo = 0;
  let hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (a[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

export function fitSmooth(points: readonly SweepPoint[]): SmoothFit | null {
  const n = points.length;
  if (n < 12) return null;
  const order = points.map((_, k) => k).sort((a, b) => points[a].vV - points[b].vV);
  const s: Sorted = {
    v: Float64Array.from(order, (k) => points[k].vV),
    p: Float64Array.from(order, (k) => points[k].pW),
  };
  const k = Math.max(12, Math.round(SPAN * n));
  let robustW: Float64Array = new Float64Array(n).fill(1);
  for (let round = 0; round <= ROBUST_ROUNDS; round++) {
    const res = Float64Array.from(s.v, (x, j) => s.p[j] - localQuadratic(s, robustW, x, k));
    if (round < ROBUST_ROUNDS) robustW = bisquareWeights(res, madSigma(res) || 1e-9);
  }
  const vMinV = quantile(s.v, 0.01);
  const vMaxV = quantile(s.v, 0.99);
  if (!(vMaxV > vMinV)) return null;
  const gridP = new Float64Array(GRID);
  for (let g = 0; g < GRID; g++)
    gridP[g] = localQuadratic(s, robustW, vMinV + ((vMaxV - vMinV) * g) / (GRID - 1), k);
  const powerW = (v: number): number => {
    const x = ((v - vMinV) / (vMaxV - vMinV)) * (GRID - 1);
    const g = Math.min(GRID - 2, Math.max(0, Math.floor(x)));
    const f = x - g;
    return gridP[g] * (1 - f) + gridP[g + 1] * f;
  };
  const res = points.map((pt) => pt.pW - powerW(pt.vV));
  return { model: 'smooth', powerW, vMinV, vMaxV, points: n, rmsW: rms(res) };
}
