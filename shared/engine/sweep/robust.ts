/** Robust statistics shared by the fits: median, MAD scale, Huber and bisquare weights. */

export function median(values: ArrayLike<number>): number {
  const a = Array.from(values).sort((x, y) => x - y);
  if (a.length === 0) return NaN;
  const m = a.length >> 1;
  return a.length % 2 ? a[m] : (a[m - 1] + a[m]) / 2;
}

export function quantile(values: ArrayLike<number>, q: number): number {
  const a = Array.from(values).sort((x, y) => x - y);
  if (a.length === 0) return NaN;
  const pos = Math.min(a.length - 1, Math.max(0, q * (a.length - 1)));
  const lo = Math.floor(pos);
  const hi = Math.ceil(pos);
  return a[lo] + (a[hi] - a[lo]) * (pos - lo);
}

/** Median absolute deviation scaled to a normal sigma (1.4826, the usual consistency factor). */
export function madSigma(values: ArrayLike<number>): number {
  const m = median(values);
  return 1.4826 * median(Array.from(values, (v) => Math.abs(v - m)));
}

/** Huber weights with the usual tuning constant 1.345 (95 % efficiency under normal noise). */
export function huberWeights(residuals: ArrayLike<number>, sigma: number): Float64Array {
  const k = 1.345 * Math.max(sigma, 1e-12);
  return Float64Array.from(residuals, (r) => (Math.abs(r) <= k ? 1 : k / Math.abs(r)));
}

/** Tukey bisquare weights with the usual tuning constant 4.685. */
export function bisquareWeights(residuals: ArrayLike<number>, sigma: number): Float64Array {
  const c = 4.685 * Math.max(sigma, 1e-12);
  return Float64Array.from(residuals, (r) => {
    const u = r / c;
    return Math.abs(u) >= 1 ? 0 : (1 - u * u) ** 2;
  });
}

export function rms(values: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i] * values[i];
  return values.length ? Math.sqrt(s / values.length) : NaN;
}
