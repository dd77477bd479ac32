/**
 * chargeCurrentA: the constant-current level the sense resistor sets. The median of the pack
 * current over the cc phase, each cc stretch trimmed by 10 % at both ends (the step into cc and
 * the bend into cv), leaving out stretches where the source, not the charger, limits the current.
 */
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

export function measureChargeCurrent(ctx: CheckContext): Measurement {
  if (!hasPhase(ctx, 'cc')) return { measured: null, basis: null, note: 'the run never reached cc' };
  const limited = sourceLimited(ctx);
  const spans = trimmedSpans(ctx, 'cc');
  const all = samplesIn(ctx, spans, (s) => s.ibatA !== undefined);
  const used = all.filter((s) => !limited(s));
  if (used.length < MIN_SAMPLES) {
    return {
      measured: null,
      basis: null,
      note:
        all.length >= MIN_SAMPLES
          ? `the source limited the current through all of cc (${all.length} samples), so the charger's own level never showed`
          : 'cc was too short to measure its level',
    };
  }
  const left = all.length - used.length;
  return {
    measured: round(median(used.map((s) => s.ibatA as number)), 4),
    basis: basisOf(used),
    note:
      `median of ${used.length} cc samples, 10 % trimmed at each end of cc` +
      (left ? `; ${left} source-limited samples left out` : ''),
  };
}
