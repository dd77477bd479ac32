/**
 * inputV: the source voltage the input loop holds when the source cannot give all the charger
 * asks (a solar charger's set point). Those are the samples charging in cc or precondition with
 * the current clearly below the level the charger reached on its own (under 90 % of the phase's
 * 95th-percentile current) while a source is present: the current loop is not in control, so
 * the input loop is. The level is taken from the run, not the profile, so a board whose current
 * is set low is not mistaken for a limited source. The value is their median source voltage.
 */
import { basisOf, median, MIN_SAMPLES, round, type CheckContext } from '../context';
import type { Measurement } from '../types';
import type { TimedSample } from '../../types';

/** Below this fraction of its set value the current loop is not the one in control (common practice). */
const LIMITED_FRACTION = 0.9;

export function measureInputVoltage(ctx: CheckContext): Measurement {
  const cc = ctx.phases.filter((s) => s.phase === 'cc' || s.phase === 'precondition');
  const level = { cc: highLevel(ctx, 'cc'), precondition: highLevel(ctx, 'precondition') };
  const used: TimedSample[] = [];
  let k = 0;
  let anyVin = false;
  for (const s of ctx.samples) {
    while (k < cc.length && s.t > cc[k].endT) k++;
    if (k >= cc.length) break;
    if (s.vinV !== undefined) anyVin = true;
    if (s.t < cc[k].startT || s.vinV === undefined || s.ibatA === undefined) continue;
    const setA = cc[k].phase === 'cc' ? level.cc : level.precondition;
    const present = s.vbatV === undefined || s.vinV > s.vbatV;
    if (present && s.ibatA > 0.01 * setA && s.ibatA < LIMITED_FRACTION * setA) used.push(s);
  }
  if (!anyVin) return { measured: null, basis: null, note: 'the source voltage (vin) was not reported' };
  if (used.length < MIN_SAMPLES)
    return {
      measured: null,
      basis: null,
      note: 'the input loop never limited the charge (the source always gave what was asked)',
    };
  return {
    measured: round(median(used.map((s) => s.vinV as number)), 3),
    basis: basisOf(used),
    note: `median source voltage of ${used.length} samples where the source held the current under ${LIMITED_FRACTION * 100} % of its set value`,
  };
}

/** The 95th-percentile current of a phase: the charger's own level when the source allowed it. */
function highLevel(ctx: CheckContext, phase: 'cc' | 'precondition'): number {
  const spans = ctx.phases.filter((s) => s.phase === phase);
  const values: number[] = [];
  let k = 0;
  for (const s of ctx.samples) {
    while (k < spans.length && s.t > spans[k].endT) k++;
    if (k >= spans.length) break;
    if (s.t >= spans[k].startT && s.ibatA !== undefined) values.push(s.ibatA);
  }
  if (values.length === 0) return 0;
  values.sort((a, b) => a - b);
  return values[Math.min(values.length - 1, Math.floor(0.95 * values.length))];
}
