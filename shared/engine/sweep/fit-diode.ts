/**
 * Fits the single-diode model to measured (V, I) points: weighted Levenberg–Marquardt on the
 * current residuals from a few starting points, with robust (Huber) reweighting so a few bad
 * samples do not bend the curve. The open-circuit voltage is a fit parameter in place of I_0
 * (I_0 follows from it), which keeps the problem far better conditioned than fitting I_0 on
 * its own scale of 1e-8.
 */
import { levenbergMarquardt } from './least-squares';
import { huberWeights, madSigma, quantile, rms } from './robust';
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

/** Robust reweighting rounds after the first plain fit. */
const REWEIGHT_ROUNDS = 3;

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
  const slope = lineSlope(tail.map((p) => p.vV), tail.map((p) => p.iA));
  const tailEnd = tail[tail.length - 1];
  const vocGuess =
    slope < 0 ? Math.max(vMaxV * 1.005, tailEnd.vV - tailEnd.iA / slope) : vMaxV * 1.15;
  const vocCap = Math.max(vocGuess * 1.6, vMaxV * 2);

  const lower = [0.8 * iMaxA, 0.98 * vMaxV, vMaxV / 60, 0, 0];
  const residuals = (theta: readonly number[]): Float64Array => {
    const p = paramsOf(theta);
    if (!(p.i0A > 0)) return new Float64Array(points.length).fill(NaN);
    return Float64Array.from(points, (_pt, k) => i[k] - diodeCurrentA(p, v[k]));
  };

  let best: { theta: number[]; cost: number } | null = null;
  for (const lnRatio of [14, 19, 26]) {
    for (const rsShare of [0.005, 0.04]) {
      const voc = Math.min(vocGuess, vocCap * 0.99);
      const start = [iMaxA * 1.02, voc, voc / lnRatio, (rsShare * voc) / iMaxA, (0.002 * iMaxA) / voc];
      const upper = [3 * iMaxA + 0.01, vocCap, vocCap / 5, (0.5 * vocCap) / iMaxA, (0.5 * lower[0]) / vocCap];
      let weights: Float64Array | undefined;
      let theta = start;
      let cost = Infinity;
      for (let round = 0; round <= REWEIGHT_ROUNDS; round++) {
        const fit = levenbergMarquardt({ residuals, lower, upper, weights }, theta, 150);
        theta = fit.theta;
        const r = residuals(theta);
        if (!r.every(Number.isFinite)) break;
        weights = huberWeights(r, madSigma(r));
        cost = huberCost(r, madSigma(r));
      }
      if (Number.isFinite(cost) && (!best || cost < best.cost)) best = { theta, cost };
    }
  }
  if (!best) return null;
  const params = paramsOf(best.theta);
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

function huberCost(r: Float64Array, sigma: number): number {
  const k = 1.345 * Math.max(sigma, 1e-12);
  let s = 0;
  for (const x of r) s += Math.abs(x) <= k ? 0.5 * x * x : k * (Math.abs(x) - 0.5 * k);
  return s;
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
