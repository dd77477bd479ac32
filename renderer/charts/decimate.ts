/**
 * Window decimation for the charts: hands Chart.js at most `maxPoints` points of a column
 * range, picked by shared/series' min-max decimation (a one-sample spike stays visible at
 * any zoom, which matters more on a charger trace than LTTB's smoothness). The window is
 * passed as typed-array views, so nothing is copied before decimating.
 */
import { minMaxIndices } from '@shared/series';
import type { PlotPoint } from './trend-source';

export function decimateWindow(
  t: Float64Array,
  y: Float32Array | Float64Array,
  i0: number,
  i1: number,
  maxPoints: number,
): PlotPoint[] {
  const out: PlotPoint[] = [];
  if (i1 <= i0) return out;
  const xs = t.subarray(i0, i1);
  const ys = y.subarray(i0, i1);
  const keep = minMaxIndices(xs, ys, maxPoints);
  for (let k = 0; k < keep.length; k++) {
    const v = ys[keep[k]];
    if (v === v) out.push({ x: xs[keep[k]], y: v }); // NaN = not reported: left out, spanGaps joins
  }
  return out;
}
