/**
 * Fits the single-diode model to measured (V, I) points: weighted Levenberg–Marquardt on the
 * current residuals from a few starting points, with robust (Huber) reweighting so a few bad
 * samples do not bend the curve. The open-circuit voltage is a fit parameter in place of I_0
 * (I_0 follows from it), which keeps the problem far better conditioned than fitting I_0 on
 * its own scale of 1e-8.
 */
import { levenbergMarquardt } from './least-squares';
import { bisquareWeights, huberWeights, madSigma, quantile, rms } from './robust';
import { diodeCurrentA, saturationForOpenCircuitA, type DiodeParams } from './single-diode';
import type { FittedCurve, SweepPoint } from './types';

export interface DiodeFit extends FittedCurve {
  model: 'single-diode';
  params: DiodeParams;
}

/** theta = [I_L, V_oc, a, R_s, G_sh]. */
function paramsOf(theta: readonly number[]): DiodeParams {
  const [ilA, vocV, aV, rsOhm, gS] = theta;
  const rshOhm = gS > 0 ? 1 / gS : Infinity;
  return { ilA, i0A: saturationForOpenCircuitA(ilA, vocV, aV, rshOhm), aV, rsOhm, rshOhm };
}

/** Robust reweighting rounds of each kind after the plain fit. */
const ROBUST_ROUNDS = 2;

export function fitSingleDiode(points: readonly SweepPoint[]): DiodeFit | null {
  if (points.length < 12) return null;
  const v = Float64Array.from(points, (p) => p.vV);
  const i = Float64Array.from(points, (p) => p.iA);
  const vMaxV = quantile(v, 0.99);
  const vMinV = quantile(v, 0.01);
  const iMaxA = quantile(i, 0.99);
  if (!(iMaxA > 0 && vMaxV > vMinV)) return null;

  // Open circuit first guess: the high-voltage end of the points extrapolated to zero current.
  const byV = points.map((p) => p).sort((a, b) => a.vV - b.vV);
  const tail = byV.slice(Math.floor(byV.length * 0.8));
  const slope = lineSlope(
    tail.map((p) => p.vV),
    tail.map((p) => p.iA),
  );
  const tailEnd = tail[tail.length - 1];
  const vocGuess = slope < 0 ? Math.max(vMaxV * 1.005, tailEnd.vV - tailEnd.iA / slope) : vMaxV * 1.15;
  const vocCap = Math.max(vocGuess * 1.6, vMaxV * 2);
  const upper = [3 * iMaxA + 0.01, vocCap, vocCap / 5, (0.5 * vocCap) / iMaxA, (0.5 * 0.8 * iMaxA) / vocCap];

  const lower = [0.8 * iMaxA, 0.98 * vMaxV, vMaxV / 60, 0, 0];
  const residuals = (theta: readonly number[]): Float64Array => {
    const p = paramsOf(theta);
    if (!(p.i0A > 0)) return new Float64Array(points.length).fill(NaN);
    return Float64Array.from(points, (_pt, k) => i[k] - diodeCurrentA(p, v[k]));
  };

  // A short plain fit from each start; the best one is then refined with robust weights:
  // Huber rounds first (convex, safe from any start), then bisquare rounds, which give points
  // far off the curve (a passing cloud, a glitch) no weight at all.
  let best: { theta: number[]; cost: number } | null = null;
  for (const lnRatio of [14, 19, 26]) {
    for (const rsShare of [0.005, 0.04]) {
      const voc = Math.min(vocGuess, vocCap * 0.99);
      const start = [iMaxA * 1.02, voc, voc / lnRatio, (rsShare * voc) / iMaxA, (0.002 * iMaxA) / voc];
      const fit = levenbergMarquardt({ residuals, lower, upper }, start, 40);
      if (Number.isFinite(fit.cost) && (!best || fit.cost < best.cost)) best = fit;
    }
  }
  if (!best) return null;
  let theta = best.theta;
  for (let round = 0; round < 2 * ROBUST_ROUNDS; round++) {
    const r = residuals(theta);
    if (!r.every(Number.isFinite)) return null;
    const sigma = madSigma(r);
    const weights = round < ROBUST_ROUNDS ? huberWeights(r, sigma) : bisquareWeights(r, sigma);
    theta = levenbergMarquardt({ residuals, lower, upper, weights }, theta, 60).theta;
  }
  const params = paramsOf(theta);
  const powerW = (vv: number): number => vv * diodeCurrentA(params, vv);
  const resW = points.map((p) => p.pW - powerW(p.vV));
  return {
    model: 'single-diode',
    params,
    powerW,
    vMinV,
    vMaxV,
    points: points.length,
    rmsW: rms(resW),
  };
}

function lineSlope(x: number[], y: number[]): number {
  const n = x.length;
  if (n < 2) return 0;
  const mx = x.reduce((a, b) => a + b, 0) / n;
  const my = y.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let k = 0; k < n; k++) {
    sxy += (x[k] - mx) * (y[k] - my);
    sxx += (x[k] - mx) ** 2;
  }
  return sxx > 0 ? sxy / sxx : 0;
}
