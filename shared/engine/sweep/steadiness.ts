/**
 * Was the light steady during the sweep? A P–V curve only means something at one irradiance:
 * when a cloud passes, the same voltage gives a different power a minute later. Each point's
 * power is divided by the curve fitted through all points; the running median of that ratio
 * over time is flat at steady light, and steps where the light changed. Revisits of the same
 * voltage minutes apart give the plainest evidence, quoted in the message.
 */
import { median } from './robust';
import type { FittedCurve, SweepPoint } from './types';

/** Light may drift this much during a sweep before the sweep counts as unsteady (project choice). */
export const STEADY_TOLERANCE = 0.03;
/** Points where the curve gives less than this share of its peak are too noisy to compare. */
const MIN_CURVE_SHARE = 0.2;
/** Two visits of one voltage must be this far apart in time to compare them ("a minute apart"). */
const REVISIT_APART_S = 60;

export interface SteadyStretch {
  /** Indices into the points (time order), inclusive start, exclusive end. */
  from: number;
  to: number;
}

export interface Steadiness {
  changed: boolean;
  /** Largest light change seen, as a share (0.28 = 28 %). */
  changeShare: number;
  /** One sentence of evidence when the light changed. */
  evidence: string | null;
  /** The longest stretch of steady light, for a restarted fit. */
  longest: SteadyStretch;
}

function runningMedian(values: readonly number[], half: number): number[] {
  return values.map((_, k) =>
    median(values.slice(Math.max(0, k - half), Math.min(values.length, k + half + 1))),
  );
}

export function checkSteadiness(points: readonly SweepPoint[], curve: FittedCurve): Steadiness {
  let peakW = 0;
  for (let k = 0; k <= 100; k++)
    peakW = Math.max(peakW, curve.powerW(curve.vMinV + ((curve.vMaxV - curve.vMinV) * k) / 100));
  // Indices of the points the ratio is meaningful for, and the ratio itself.
  const idx: number[] = [];
  const ratio: number[] = [];
  points.forEach((p, k) => {
    const c = curve.powerW(p.vV);
    if (c > MIN_CURVE_SHARE * peakW && p.vV >= curve.vMinV && p.vV <= curve.vMaxV) {
      idx.push(k);
      ratio.push(p.pW / c);
    }
  });
  const all: SteadyStretch = { from: 0, to: points.length };
  if (ratio.length < 10) return { changed: false, changeShare: 0, evidence: null, longest: all };

  const half = Math.max(4, Math.round(ratio.length / 80));
  const level = runningMedian(ratio, half);
  const lo = Math.min(...level);
  const hi = Math.max(...level);
  const changeShare = (hi - lo) / hi;
  const revisit = revisitEvidence(points, idx, ratio);
  // Against the rigid diode curve a step in the level means the light changed. A smooth curve
  // bends with the points, so along a one-way sweep a change of light and a change of shape look
  // alike: there only revisits of the same voltage decide.
  const changed =
    curve.model === 'smooth' ? revisit !== null : changeShare > STEADY_TOLERANCE || revisit !== null;
  if (!changed) {
    // Along a smooth curve the level's range measures the fit, not the light.
    const share = curve.model === 'smooth' ? 0 : changeShare;
    return { changed: false, changeShare: share, evidence: null, longest: all };
  }

  // Greedy stretches of steady level: a new stretch starts where the level leaves the band
  // around the mean level of the stretch so far.
  let best: SteadyStretch = { from: 0, to: 0 };
  let start = 0;
  let sum = 0;
  for (let j = 0; j <= level.length; j++) {
    const mean = j > start ? sum / (j - start) : level[j];
    if (j === level.length || Math.abs(level[j] - mean) > (STEADY_TOLERANCE / 2) * mean) {
      if (j - start > best.to - best.from) best = { from: start, to: j };
      start = j;
      sum = 0;
    }
    if (j < level.length) sum += level[j];
  }
  const longest: SteadyStretch = {
    from: idx[best.from] ?? 0,
    to: best.to > best.from ? idx[best.to - 1] + 1 : points.length,
  };
  return {
    changed: true,
    changeShare,
    evidence: revisit ?? levelEvidence(points, idx, level),
    longest,
  };
}

/** "at 16.2 V the source gave 14.1 W at 120 s and 10.2 W at 410 s": the worst revisit. */
function revisitEvidence(points: readonly SweepPoint[], idx: number[], ratio: number[]): string | null {
  let worst: { a: number; b: number; share: number } | null = null;
  for (let x = 0; x < idx.length; x++) {
    for (let y = x + 1; y < idx.length; y++) {
      const a = points[idx[x]];
      const b = points[idx[y]];
      if (b.tS - a.tS < REVISIT_APART_S) continue;
      if (Math.abs(a.vV - b.vV) > Math.max(0.02, 0.002 * a.vV)) continue;
      const share = Math.abs(ratio[x] - ratio[y]) / Math.max(ratio[x], ratio[y]);
      if (share > STEADY_TOLERANCE && (!worst || share > worst.share))
        worst = { a: idx[x], b: idx[y], share };
    }
  }
  if (!worst) return null;
  const a = points[worst.a];
  const b = points[worst.b];
  return (
    `the light changed during the sweep: at ${a.vV.toFixed(2)} V the source gave ${a.pW.toFixed(2)} W ` +
    `at ${a.tS.toFixed(0)} s and ${b.pW.toFixed(2)} W at ${b.tS.toFixed(0)} s`
  );
}

function levelEvidence(points: readonly SweepPoint[], idx: number[], level: number[]): string {
  let kLo = 0;
  let kHi = 0;
  level.forEach((v, k) => {
    if (v < level[kLo]) kLo = k;
    if (v > level[kHi]) kHi = k;
  });
  const pct = ((level[kHi] - level[kLo]) / level[kHi]) * 100;
  return (
    `the light changed during the sweep: the power at the same voltage differed by about ` +
    `${pct.toFixed(0)} % between ${points[idx[Math.min(kLo, kHi)]].tS.toFixed(0)} s and ` +
    `${points[idx[Math.max(kLo, kHi)]].tS.toFixed(0)} s`
  );
}
