/**
 * Largest-Triangle-Three-Buckets downsampling (Sveinn Steinarsson, "Downsampling Time
 * Series for Visual Representation", MSc thesis, University of Iceland, 2013): keeps the
 * first and last points and, from each of threshold - 2 equal-count buckets between
 * them, the point forming the largest triangle with the previously kept point and the
 * average of the next bucket. Keeps the visual shape of a line with few points.
 */
import { columnsOf, lengthOf, pick, type SeriesInput, type XYColumns, type XYPoint } from './input';

/**
 * Indices of the points LTTB keeps, ascending. `threshold` >= length or 0 keeps every
 * point (the usual convention of LTTB implementations); 1 keeps the first, 2 the first
 * and the last. Points whose y is not finite (gaps) are never picked over finite ones.
 */
export function lttbIndices(x: ArrayLike<number>, y: ArrayLike<number>, threshold: number): Uint32Array {
  const n = Math.min(x.length, y.length);
  const t = Math.floor(threshold);
  if (!(t > 0) || t >= n) return Uint32Array.from({ length: n }, (_, i) => i);
  if (t === 1) return Uint32Array.of(0);
  if (t === 2) return Uint32Array.of(0, n - 1);

  const out = new Uint32Array(t);
  const every = (n - 2) / (t - 2);
  let a = 0;
  out[0] = 0;
  for (let i = 0; i < t - 2; i++) {
    // Average of the next bucket (the last point, for the last bucket).
    const avgStart = Math.floor((i + 1) * every) + 1;
    const avgEnd = Math.min(Math.floor((i + 2) * every) + 1, n);
    let avgX = 0;
    let avgY = 0;
    let avgCount = 0;
    for (let j = avgStart; j < avgEnd; j++) {
      const yj = y[j];
      if (yj === yj && yj !== Infinity && yj !== -Infinity) {
        avgX += x[j];
        avgY += yj;
        avgCount++;
      }
    }
    if (avgCount > 0) {
      avgX /= avgCount;
      avgY /= avgCount;
    } else {
      avgX = x[Math.min(avgStart, n - 1)];
      avgY = y[a];
    }
    // This bucket: the point with the largest triangle (a, point, average).
    const rangeStart = Math.floor(i * every) + 1;
    const rangeEnd = Math.floor((i + 1) * every) + 1;
    const ax = x[a];
    const ay = y[a];
    let maxArea = -1;
    let next = rangeStart;
    for (let j = rangeStart; j < rangeEnd; j++) {
      // Twice the triangle's area; the factor 1/2 does not change which point wins.
      const area = Math.abs((ax - avgX) * (y[j] - ay) - (ax - x[j]) * (avgY - ay));
      if (area > maxArea) {
        maxArea = area;
        next = j;
      }
    }
    out[i + 1] = next;
    a = next;
  }
  out[t - 1] = n - 1;
  return out;
}

/** LTTB of points (returns the kept points themselves) or of columns (returns new columns). */
export function lttb(data: readonly XYPoint[], threshold: number): XYPoint[];
export function lttb(data: XYColumns, threshold: number): { x: Float64Array; y: Float64Array };
export function lttb(data: SeriesInput, threshold: number): XYPoint[] | { x: Float64Array; y: Float64Array } {
  if (lengthOf(data) === 0)
    return Array.isArray(data) ? [] : { x: new Float64Array(0), y: new Float64Array(0) };
  const cols = columnsOf(data);
  return pick(data, lttbIndices(cols.x, cols.y, threshold));
}
