/**
 * terminationA: the current at which the charge ended. From the first `done`, the charger
 * may still pass current while it confirms termination; the value is the median of the last
 * few samples that still carried current before it stopped (or before `done` when it never
 * stops, as in a lead-acid float).
 */
import { basisOf, median, round, type CheckContext } from '../context';
import type { Measurement } from '../types';

/** Samples averaged at the end of the taper (noise of a few mA, common practice). */
const TAIL_SAMPLES = 3;
/** The charger confirms termination within this long after Taperline sees it (common practice: tens of s). */
const CONFIRM_WINDOW_S = 300;

export function measureTermination(ctx: CheckContext): Measurement {
  const done = ctx.phases.find((s) => s.phase === 'done');
  if (!done) return { measured: null, basis: null, note: 'the charge never ended (no done phase)' };
  const flowingA = Math.max(0.005, 0.01 * ctx.profile.chargeCurrentA);
  const { samples } = ctx;
  let i = samples.findIndex((s) => s.t >= done.startT);
  if (i < 0) i = samples.length;
  // Walk on while current still flows (the charger confirming); stop where it falls to zero.
  let last = i - 1;
  for (let k = i; k < samples.length && samples[k].t <= done.startT + CONFIRM_WINDOW_S; k++) {
    const a = samples[k].ibatA;
    if (a === undefined) continue;
    if (a < flowingA) break;
    last = k;
  }
  const tail = [];
  for (let k = last; k >= 0 && tail.length < TAIL_SAMPLES; k--) {
    const a = samples[k].ibatA;
    if (a !== undefined && a >= flowingA) tail.unshift(samples[k]);
  }
  if (tail.length === 0)
    return { measured: null, basis: null, note: 'no current flowed before the charge ended' };
  return {
    measured: round(median(tail.map((s) => s.ibatA as number)), 4),
    basis: basisOf(tail),
    note: `median of the last ${tail.length} samples carrying current before the charge ended at ${(done.startT / 60).toFixed(1)} min`,
  };
}
