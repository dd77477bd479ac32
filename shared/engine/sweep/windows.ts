/**
 * Finds the sweeps in a run: stretches where the source voltage keeps moving across a wide
 * range (a person turning the set point), as opposed to steady stretches where the charger
 * holds the panel at one set point.
 */
import { median } from './robust';
import type { SweepPoint } from './types';

/** Half-width of the window in which the voltage must move for a point to count as moving. */
const MOVE_HALF_WINDOW_S = 60;
/** Movement within that window: at least this share of the voltage (and 0.3 V). */
const MOVE_SHARE = 0.02;
const MOVE_MIN_V = 0.3;
/** Moving stretches closer than this merge (the hand pauses on the trimmer). */
const MERGE_GAP_S = 90;
/** A sweep spans at least this share of its highest voltage (1.5 V on a 12 V-class panel), with this many points. */
const SWEEP_SPAN_SHARE = 0.08;
const SWEEP_MIN_POINTS = 30;

export interface SweepWindow {
  /** Indices into the points (time order): inclusive start, exclusive end. */
  from: number;
  to: number;
  fromS: number;
  toS: number;
}

export function findSweepWindows(points: readonly SweepPoint[]): SweepWindow[] {
  const n = points.length;
  if (n === 0) return [];
  const moving = new Uint8Array(n);
  let lo = 0;
  let hi = 0;
  for (let k = 0; k < n; k++) {
    const t = points[k].tS;
    while (points[lo].tS < t - MOVE_HALF_WINDOW_S) lo++;
    while (hi + 1 < n && points[hi + 1].tS <= t + MOVE_HALF_WINDOW_S) hi++;
    let vMin = Infinity;
    let vMax = -Infinity;
    for (let j = lo; j <= hi; j++) {
      vMin = Math.min(vMin, points[j].vV);
      vMax = Math.max(vMax, points[j].vV);
    }
    moving[k] = vMax - vMin > Math.max(MOVE_MIN_V, MOVE_SHARE * points[k].vV) ? 1 : 0;
  }
  const windows: SweepWindow[] = [];
  let k = 0;
  while (k < n) {
    if (!moving[k]) {
      k++;
      continue;
    }
    const from = k;
    let last = k;
    while (k < n && (moving[k] || points[k].tS - points[last].tS <= MERGE_GAP_S)) {
      if (moving[k]) last = k;
      k++;
    }
    const to = last + 1;
    const vs = points.slice(from, to).map((p) => p.vV);
    const vMax = Math.max(...vs);
    if (to - from >= SWEEP_MIN_POINTS && vMax - Math.min(...vs) >= SWEEP_SPAN_SHARE * vMax) {
      windows.push({ from, to, fromS: points[from].tS, toS: points[to - 1].tS });
    }
  }
  return windows;
}

/** Median source voltage over the last `spanS` seconds of the points. */
export function medianVoltageAtEnd(points: readonly SweepPoint[], spanS = 30): number | null {
  if (points.length === 0) return null;
  const endS = points[points.length - 1].tS;
  const tail = points.filter((p) => p.tS >= endS - spanS).map((p) => p.vV);
  return median(tail);
}
