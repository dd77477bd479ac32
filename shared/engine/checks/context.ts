/**
 * The view of a run every check module reads: phase spans, the charger's fault, the typical
 * sample interval and a few robust statistics, computed once.
 */
import type { ResolvedProfile } from '../../chemistry/types';
import { phaseSpans, typicalInterval, type PhaseSpan } from '../diagnosis/context';
import type { AlarmEvent, EngineEvent, Phase, TimedSample } from '../types';
import type { CheckBasis } from './types';

export interface CheckContext {
  profile: ResolvedProfile;
  samples: readonly TimedSample[];
  events: readonly EngineEvent[];
  alarms: readonly AlarmEvent[];
  phases: readonly PhaseSpan[];
  /** First time the charger faulted (fault phase or fault output); null when it never did. */
  fault: { t: number; what: string } | null;
  typicalDtS: number;
  startT: number;
  endT: number;
}

/** At least this many samples make a measured value (fewer is noise, common practice). */
export const MIN_SAMPLES = 5;

export function buildCheckContext(
  profile: ResolvedProfile,
  samples: readonly TimedSample[],
  events: readonly EngineEvent[],
): CheckContext {
  const startT = samples.length ? samples[0].t : 0;
  let endT = samples.length ? samples[samples.length - 1].t : 0;
  for (const e of events) if (e.t > endT) endT = e.t;
  // The charger's own fault: the fault phase or its fault output. A critical alarm alone
  // (overvoltage, overtemp) is Taperline's judgement and shows in the checks instead.
  const faultPhase = events.find((e) => e.type === 'phase' && e.phase === 'fault');
  const fltSample = samples.find((s) => s.flt === true);
  const faultT = Math.min(faultPhase?.t ?? Infinity, fltSample?.t ?? Infinity);
  const what =
    fltSample?.t === faultT ? "the charger's fault output (flt) asserted" : 'the run entered the fault phase';
  return {
    profile,
    samples,
    events,
    alarms: events.filter((e): e is AlarmEvent => e.type === 'alarm'),
    phases: phaseSpans(events, endT),
    fault: Number.isFinite(faultT) ? { t: faultT, what } : null,
    typicalDtS: typicalInterval(samples, samples.length),
    startT,
    endT,
  };
}

/** Spans of one phase, each trimmed at both ends (transients at a phase change are not the level). */
export function trimmedSpans(
  ctx: CheckContext,
  phase: Phase,
  edgeFraction = 0.1,
): { startT: number; endT: number }[] {
  const out: { startT: number; endT: number }[] = [];
  for (const s of ctx.phases) {
    if (s.phase !== phase) continue;
    const edge = Math.max(edgeFraction * (s.endT - s.startT), 2 * ctx.typicalDtS);
    if (s.endT - s.startT > 2 * edge) out.push({ startT: s.startT + edge, endT: s.endT - edge });
  }
  return out;
}

/** Samples inside the given stretches (stretches sorted by time), filtered by `keep`. */
export function samplesIn(
  ctx: CheckContext,
  spans: readonly { startT: number; endT: number }[],
  keep: (s: TimedSample) => boolean,
): TimedSample[] {
  const out: TimedSample[] = [];
  let k = 0;
  for (const s of ctx.samples) {
    while (k < spans.length && s.t > spans[k].endT) k++;
    if (k >= spans.length) break;
    if (s.t >= spans[k].startT && keep(s)) out.push(s);
  }
  return out;
}

export function median(values: readonly number[]): number {
  const v = [...values].sort((a, b) => a - b);
  const mid = v.length >> 1;
  return v.length % 2 ? v[mid] : (v[mid - 1] + v[mid]) / 2;
}

export function basisOf(samples: readonly TimedSample[]): CheckBasis {
  return { fromT: samples[0].t, toT: samples[samples.length - 1].t, samples: samples.length };
}

export function hasPhase(ctx: CheckContext, phase: Phase): boolean {
  return ctx.phases.some((s) => s.phase === phase);
}

/** Source-limited: the input loop or a weak source holds the current below its set point. */
export function sourceLimited(ctx: CheckContext): (s: TimedSample) => boolean {
  const lows = ctx.events.filter((e) => e.type === 'alarm' || e.type === 'alarm-clear');
  const setV = ctx.profile.inputSetpointV;
  return (s) => {
    // Within 3 % of the set point the input loop is regulating (common practice for MPPT stages).
    if (setV !== null && s.vinV !== undefined && s.vinV <= setV * 1.03) return true;
    let low = false;
    for (const e of lows) {
      if (e.t > s.t) break;
      if (e.code === 'input-low') low = e.type === 'alarm';
    }
    return low;
  };
}

export const round = (x: number, digits: number): number => {
  const f = 10 ** digits;
  return Math.round(x * f) / f;
};

export const fmtMin = (s: number): string => `${(s / 60).toFixed(1)} min`;
