/** preconditionA: the gentle current of a deeply discharged pack; median over precondition, trimmed. */
import {
  basisOf,
  hasPhase,
  median,
  MIN_SAMPLES,
  round,
  samplesIn,
  sourceLimited,
  trimmedSpans,
  type CheckContext,
} from '../context';
import type { Measurement } from '../types';

export function measurePrecondition(ctx: CheckContext): Measurement {
  if (!hasPhase(ctx, 'precondition'))
    return {
      measured: null,
      basis: null,
      note: 'the pack started above the precondition threshold; the run had no precondition',
    };
  const limited = sourceLimited(ctx);
  const used = samplesIn(ctx, trimmedSpans(ctx, 'precondition'), (s) => s.ibatA !== undefined && !limited(s));
  if (used.length < MIN_SAMPLES)
    return { measured: null, basis: null, note: 'precondition was too short to measure its current' };
  return {
    measured: round(median(used.map((s) => s.ibatA as number)), 4),
    basis: basisOf(used),
    note: `median of ${used.length} precondition samples, 10 % trimmed at each end`,
  };
}
