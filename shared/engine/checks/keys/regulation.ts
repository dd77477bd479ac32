/**
 * regulationV: the pack voltage the feedback divider holds in cv. The median pack voltage over
 * the cv phase, trimmed at both ends (the approach from cc, the step at termination).
 */
import {
  basisOf,
  hasPhase,
  median,
  MIN_SAMPLES,
  round,
  samplesIn,
  trimmedSpans,
  type CheckContext,
} from '../context';
import type { Measurement } from '../types';

export function measureRegulation(ctx: CheckContext): Measurement {
  if (ctx.profile.chemistry === 'nimh')
    return { measured: null, basis: null, note: 'NiMH charges at constant current and has no cv' };
  if (!hasPhase(ctx, 'cv')) return { measured: null, basis: null, note: 'the run never reached cv' };
  const used = samplesIn(ctx, trimmedSpans(ctx, 'cv'), (s) => s.vbatV !== undefined);
  if (used.length < MIN_SAMPLES)
    return { measured: null, basis: null, note: 'cv was too short to measure its voltage' };
  return {
    measured: round(median(used.map((s) => s.vbatV as number)), 4),
    basis: basisOf(used),
    note: `median pack voltage of ${used.length} cv samples, 10 % trimmed at each end of cv`,
  };
}
