/**
 * Min-max decimation: split the x range into equal-width buckets (one per pixel column,
 * say) and keep each bucket's lowest and highest point, in their original order, plus
 * the first and last points. Unlike LTTB it never drops a one-sample spike, so a brief
 * overvoltage or current dropout stays visible at any zoom.
 */
import { columnsOf, lengthOf, pick, type SeriesInput, type XYColumns, type XYPoint } from './input';

/**
 * Indices kept, ascending, at most `threshold` of them. Assumes x ascending (time).
 * Points with a non-finite y (gaps) are not kept as minima or maxima.
 */
export function minMaxIndices(x: ArrayLike<number>, y: ArrayLike<number>, threshold: number): Uint32Array {
  const n = Math.min(x.length, y.length);
  const t = Math.floor(threshold);
  if (!(t > 0) || t >= n) return Uint32Array.from({ length: n }, (_, i) => i);
  if (t === 1) return Uint32Array.of(0);
  const buckets = Math.floor((t - 2) / 2);
  if (buckets < 1) return Uint32Array.of(0, n - 1);

  const x0 = x[0];
  const span = x[n - 1] - x0;
  const scale = span > 0 ? buckets / span : 0;
  const out = new Uint32Array(t);
  let count = 0;
  out[count++] = 0;
  let bucket = -1;
  let minI = -1;
  let maxI = -1;
  let minY = Infinity;
  let maxY = -Infinity;
  const flush = () => {
    if (minI < 0) return;
    const first = minI < maxI ? minI : maxI;
    const second = minI < maxI ? maxI : minI;
    if (first !== out[count - 1]) out[count++] = first;
    if (second !== first) out[count++] = second;
  };
  for (let i = 1; i < n - 1; i++) {
    let b = Math.floor((x[i] - x0) * scale);
    if (!(b >= 0)) b = 0;
    else if (b >= buckets) b = buckets - 1;
    if (b !== bucket) {
      flush();
      bucket = b;
      minI = -1;
      maxI = -1;
      minY = Infinity;
      maxY = -Infinity;
    }
    const yi = y[i];
    if (yi < minY) {
      minY = yi;
      minI = i;
    }
    if (yi > maxY) {
      maxY = yi;
      maxI = i;
    }
    if (minI < 0 && maxI >= 0) minI = maxI;
    if (maxI < 0 && minI >= 0) maxI = minI;
  }
  flush();
  out[count++] = n - 1;
  return out.slice(0, count);
}

/** Min-max decimation of points (returns the kept points) or columns (returns new columns). */
export function minMaxDecimate(data: readonly XYPoint[], threshold: number): XYPoint[];
export function minMaxDecimate(data: XYColumns, threshold: number): { x: Float64Array; y: Float64Array };
export function minMaxDecimate(
  data: SeriesInput,
  threshold: number,
): XYPoint[] | { x: Float64Array; y: Float64Array } {
  if (lengthOf(data) === 0)
    return Array.isArray(data) ? [] : { x: new Float64Array(0), y: new Float64Array(0) };
  const cols = columnsOf(data);
  return pick(data, minMaxIndices(cols.x, cols.y, threshold));
}
