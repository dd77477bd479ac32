/** chargeTimeMin: from the first sample to the first `done`. */
import { round, type CheckContext } from '../context';
import type { Measurement } from '../types';

export function measureChargeTime(ctx: CheckContext): Measurement {
  const done = ctx.phases.find((s) => s.phase === 'done');
  if (!done) return { measured: null, basis: null, note: 'the charge never finished (no done phase)' };
  let n = 0;
  for (const s of ctx.samples) if (s.t <= done.startT) n++;
  return {
    measured: round((done.startT - ctx.startT) / 60, 2),
    basis: { fromT: ctx.startT, toT: done.startT, samples: n },
    note: `from the first sample to done at ${(done.startT / 60).toFixed(1)} min`,
  };
}
