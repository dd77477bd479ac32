/**
 * A small seeded pseudo-random generator (mulberry32), so every simulated run is the same
 * for the same seed. Not for anything secret: it only makes demo noise and cloud timing.
 */
export interface Rng {
  /** Uniform in [0, 1). */
  next(): number;
  /** Uniform in [lo, hi). */
  between(lo: number, hi: number): number;
  /** Standard normal (Box-Muller), scaled by `sigma`. */
  normal(sigma: number): number;
}

export function createRng(seed: number): Rng {
  let state = (Math.floor(seed) ^ 0x9e3779b9) >>> 0;
  const next = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 15), z | 1);
    z ^= z + Math.imul(z ^ (z >>> 7), z | 61);
    return ((z ^ (z >>> 14)) >>> 0) / 4294967296;
  };
  return {
    next,
    between: (lo, hi) => lo + (hi - lo) * next(),
    normal(sigma) {
      const u = Math.max(next(), 1e-12);
      const v = next();
      return sigma * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
    },
  };
}
