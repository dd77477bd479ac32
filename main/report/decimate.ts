/**
 * Thins a sample series to what a chart can draw (a few thousand points) with min-max
 * decimation from shared/series, as the dashboard does, so a one-sample spike survives; breaks the line where telemetry stopped so a gap is
 * not drawn as a slope.
 */
import type { TimedSample } from '@shared/engine/types';
import { minMaxIndices } from '@shared/series';

/** One field as columns, with the start index of each unbroken run. */
export interface SeriesColumns {
  x: Float64Array;
  y: Float64Array;
  /** runStarts[k] is the first index of run k; runs end where the next starts (or at length). */
  runStarts: number[];
  length: number;
}

/** The finite values of one field, split into runs where consecutive samples are closer than `breakS`. */
export function seriesColumns(
  samples: readonly TimedSample[],
  pick: (s: TimedSample) => number | undefined,
  breakS: number,
): SeriesColumns {
  const x = new Float64Array(samples.length);
  const y = new Float64Array(samples.length);
  const runStarts: number[] = [];
  let n = 0;
  let lastT = -Infinity;
  for (let i = 0; i < samples.length; i++) {
    const s = samples[i];
    const v = pick(s);
    if (v === undefined || !Number.isFinite(v)) continue;
    if (n === 0 || s.t - lastT > breakS) runStarts.push(n);
    x[n] = s.t;
    y[n] = v;
    n++;
    lastT = s.t;
  }
  return { x, y, runStarts, length: n };
}

/**
 * Min-max per run, each run given a share of `target` by its length; returned flat as
 * x0, y0, x1, y1, ... with a null y between runs (a break in the line).
 */
export function decimateColumns(cols: SeriesColumns, target: number): (number | null)[] {
  const out: (number | null)[] = [];
  cols.runStarts.forEach((from, k) => {
    const to = k + 1 < cols.runStarts.length ? cols.runStarts[k + 1] : cols.length;
    const len = to - from;
    if (k > 0) out.push(cols.x[from], null);
    const xs = cols.x.subarray(from, to);
    const ys = cols.y.subarray(from, to);
    const share = Math.max(3, Math.round((target * len) / Math.max(1, cols.length)));
    if (len <= share) {
      for (let i = 0; i < len; i++) out.push(round(xs[i], 3), round(ys[i], 4));
      return;
    }
    for (const i of minMaxIndices(xs, ys, share)) out.push(round(xs[i], 3), round(ys[i], 4));
  });
  return out;
}

function round(v: number, digits: number): number {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
}
