/**
 * The principal branch of the Lambert W function, W(z) e^W(z) = z, for z >= 0. The single-diode
 * equation needs W of numbers far beyond the double range (e^700 and more), so the working
 * entry point takes the logarithm of the argument: `lambertWOfExp(x) = W(e^x)`.
 */

/** W(e^x): solves w + ln w = x by Newton's method (monotone from the starting points used). */
export function lambertWOfExp(x: number): number {
  if (!Number.isFinite(x)) return x > 0 ? Infinity : 0;
  // For very negative x, W(z) ~ z: e^x underflows long before the difference matters.
  if (x < -30) return Math.exp(x);
  // Both starts lie below the root (z/(1+z) <= W(z); x - ln x <= W(e^x) for x >= 1), where
  // Newton's method on the concave w + ln w - x climbs monotonically and never leaves w > 0.
  let w = x < 1 ? Math.exp(x) / (1 + Math.exp(x)) : x - Math.log(x);
  for (let k = 0; k < 60; k++) {
    const next = (w * (1 + x - Math.log(w))) / (1 + w);
    if (Math.abs(next - w) <= 1e-15 * Math.max(1, Math.abs(next))) return next;
    w = next;
  }
  return w;
}

/** W(z) for z >= 0. */
export function lambertW(z: number): number {
  if (z < 0) throw new RangeError(`lambertW: only z >= 0 is needed here, got ${z}`);
  if (z === 0) return 0;
  return lambertWOfExp(Math.log(z));
}
