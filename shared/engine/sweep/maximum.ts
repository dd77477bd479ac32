/**
 * The maximum power point of a fitted curve, searched only inside the swept range: a maximum
 * at (or beyond) either end of the sweep is refused, because the curve there is extrapolation
 * and the true peak may lie further out.
 */
import { goldenMax } from './single-diode';
import type { FittedCurve, MaximumPowerPoint } from './types';

/** A peak closer than this share of the swept span to an end counts as "at the end". */
const EDGE_SHARE = 0.03;
const SCAN_STEPS = 400;

export type MaximumResult = { ok: true; mpp: MaximumPowerPoint } | { ok: false; reason: string };

export function findMaximum(curve: FittedCurve): MaximumResult {
  const lo = curve.vMinV;
  const hi = curve.vMaxV;
  const step = (hi - lo) / SCAN_STEPS;
  let bestK = 0;
  let bestP = -Infinity;
  for (let k = 0; k <= SCAN_STEPS; k++) {
    const p = curve.powerW(lo + k * step);
    if (p > bestP) {
      bestP = p;
      bestK = k;
    }
  }
  const refined = goldenMax(
    (v) => curve.powerW(v),
    lo + Math.max(0, bestK - 1) * step,
    lo + Math.min(SCAN_STEPS, bestK + 1) * step,
  );
  const mpp = { vV: refined.x, pW: refined.y };
  const edge = EDGE_SHARE * (hi - lo);
  if (!(mpp.pW > 0)) return { ok: false, reason: 'the source gave no power during the sweep' };
  if (mpp.vV - lo < edge) {
    return {
      ok: false,
      reason:
        `the power still rises toward the low end of the sweep (${lo.toFixed(2)} V): ` +
        'the maximum lies outside the swept range; turn the set point further down and sweep again',
    };
  }
  if (hi - mpp.vV < edge) {
    return {
      ok: false,
      reason:
        `the power still rises toward the high end of the sweep (${hi.toFixed(2)} V): ` +
        'the maximum lies outside the swept range; turn the set point further up and sweep again',
    };
  }
  return { ok: true, mpp };
}
