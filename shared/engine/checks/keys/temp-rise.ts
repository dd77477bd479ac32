/** tempRiseC: the highest pack temperature minus the first one. */
import { round, type CheckContext } from '../context';
import type { Measurement } from '../types';

export function measureTempRise(ctx: CheckContext): Measurement {
  let first: number | null = null;
  let firstT = 0;
  let max = -Infinity;
  let maxT = 0;
  let n = 0;
  for (const s of ctx.samples) {
    if (s.tempC === undefined) continue;
    n++;
    if (first === null) {
      first = s.tempC;
      firstT = s.t;
    }
    if (s.tempC > max) {
      max = s.tempC;
      maxT = s.t;
    }
  }
  if (first === null) return { measured: null, basis: null, note: 'the run reported no pack temperature' };
  return {
    measured: round(max - first, 2),
    basis: { fromT: firstT, toT: Math.max(firstT, maxT), samples: n },
    note: `from ${first.toFixed(1)} °C at the start to the highest ${max.toFixed(1)} °C`,
  };
}
