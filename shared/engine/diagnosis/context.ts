/**
 * The history a diagnosis reads: everything up to the diagnosed time, plus the phase spans
 * and the typical sample interval, computed once and shared by every cause module.
 */
import type { ResolvedProfile } from '../../chemistry/types';
import type { AlarmEvent, EngineEvent, GapEvent, Phase, TimedSample } from '../types';
import type { DiagnosisInput } from './types';

export interface PhaseSpan {
  phase: Phase;
  startT: number;
  /** End of the span, clipped to the diagnosed time. */
  endT: number;
}

/** What marked the diagnosed moment as a fault. */
export interface FaultMarker {
  t: number;
  /** Human-readable description, e.g. `the fault output (flt) asserted`. */
  what: string[];
}

export interface DiagnosisContext {
  profile: ResolvedProfile;
  /** The diagnosed time. */
  t: number;
  /** The fault being explained; null when diagnosing a moment with no fault (end of a clean run). */
  fault: FaultMarker | null;
  /** All samples; only indices [0, end) are history (t <= diagnosed time). */
  samples: readonly TimedSample[];
  end: number;
  /** Events with t <= diagnosed time. */
  events: readonly EngineEvent[];
  alarms: readonly AlarmEvent[];
  gaps: readonly GapEvent[];
  phases: readonly PhaseSpan[];
  /** Median interval between samples, seconds (1 when unknown). */
  typicalDtS: number;
}

/** The first fault of a run: the fault phase, the fault output asserted, or the first critical alarm. */
export function findFirstFault(
  samples: readonly TimedSample[],
  events: readonly EngineEvent[],
): FaultMarker | null {
  let phaseT = Infinity;
  let alarmT = Infinity;
  let alarmCodes: string[] = [];
  for (const e of events) {
    if (e.type === 'phase' && e.phase === 'fault' && e.t < phaseT) phaseT = e.t;
    if (e.type === 'alarm' && e.level === 'critical') {
      if (e.t < alarmT) {
        alarmT = e.t;
        alarmCodes = [e.code];
      } else if (e.t === alarmT) alarmCodes.push(e.code);
    }
  }
  let fltT = Infinity;
  for (const s of samples) {
    if (s.flt === true) {
      fltT = s.t;
      break;
    }
  }
  const t = Math.min(phaseT, alarmT, fltT);
  if (!Number.isFinite(t)) return null;
  const what: string[] = [];
  if (phaseT === t) what.push('the run entered the fault phase');
  if (fltT === t) what.push("the charger's fault output (flt) asserted");
  if (alarmT === t) what.push(`critical alarm ${alarmCodes.join(', ')}`);
  return { t, what };
}

/** Index of the first sample with t > limit (samples sorted by t). */
export function upperBound(samples: readonly TimedSample[], limit: number): number {
  let lo = 0;
  let hi = samples.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (samples[mid].t <= limit) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Median of up to ~2000 sample intervals spread over the history: cheap and robust to gaps. */
export function typicalInterval(samples: readonly TimedSample[], end: number): number {
  if (end < 2) return 1;
  const stride = Math.max(1, Math.floor((end - 1) / 2000));
  const dts: number[] = [];
  for (let i = 1; i < end; i += stride) {
    const dt = samples[i].t - samples[i - 1].t;
    if (dt > 0) dts.push(dt);
  }
  if (dts.length === 0) return 1;
  dts.sort((a, b) => a - b);
  return dts[dts.length >> 1];
}

export function phaseSpans(events: readonly EngineEvent[], untilT: number): PhaseSpan[] {
  const spans: PhaseSpan[] = [];
  for (const e of events) {
    if (e.type !== 'phase' || e.t > untilT) continue;
    const last = spans[spans.length - 1];
    if (last) last.endT = e.t;
    spans.push({ phase: e.phase, startT: e.t, endT: untilT });
  }
  return spans;
}

export function buildContext(input: DiagnosisInput): DiagnosisContext {
  const { profile, samples, events } = input;
  const runEndT = Math.max(samples.length ? samples[samples.length - 1].t : 0, lastEventT(events));
  const firstFault = findFirstFault(samples, events);
  let t: number;
  let fault: FaultMarker | null;
  if (input.atT !== undefined && Number.isFinite(input.atT)) {
    t = input.atT;
    // An explicit time is a fault when one of the fault markers is active then.
    fault = faultActiveAt(samples, events, t);
  } else if (firstFault) {
    t = firstFault.t;
    fault = firstFault;
  } else {
    t = runEndT;
    fault = null;
  }
  const end = upperBound(samples, t);
  const past = events.filter((e) => e.t <= t);
  return {
    profile,
    t,
    fault,
    samples,
    end,
    events: past,
    alarms: past.filter((e): e is AlarmEvent => e.type === 'alarm'),
    gaps: past.filter((e): e is GapEvent => e.type === 'gap'),
    phases: phaseSpans(past, t),
    typicalDtS: typicalInterval(samples, end),
  };
}

function lastEventT(events: readonly EngineEvent[]): number {
  let t = 0;
  for (const e of events) if (e.t > t) t = e.t;
  return t;
}

/** At an explicit time: the fault phase is current, flt is asserted, or a critical alarm is active. */
function faultActiveAt(
  samples: readonly TimedSample[],
  events: readonly EngineEvent[],
  t: number,
): FaultMarker | null {
  const what: string[] = [];
  let phase: Phase | null = null;
  const active = new Map<string, AlarmEvent>();
  for (const e of events) {
    if (e.t > t) continue;
    if (e.type === 'phase') phase = e.phase;
    else if (e.type === 'alarm' && e.level === 'critical') active.set(e.code, e);
    else if (e.type === 'alarm-clear') active.delete(e.code);
  }
  if (phase === 'fault') what.push('the run was in the fault phase');
  const end = upperBound(samples, t);
  if (end > 0 && samples[end - 1].flt === true) what.push("the charger's fault output (flt) was asserted");
  if (active.size > 0) what.push(`critical alarm ${[...active.keys()].join(', ')} active`);
  return what.length ? { t, what } : null;
}

/** Walks phase spans alongside samples in time order (amortised O(1) per call). */
export class PhaseCursor {
  private i = 0;
  constructor(private readonly spans: readonly PhaseSpan[]) {}
  at(t: number): Phase | null {
    if (this.spans.length === 0 || t < this.spans[0].startT) return null;
    while (this.i + 1 < this.spans.length && this.spans[this.i + 1].startT <= t) this.i++;
    return this.spans[this.i].phase;
  }
}

/** Seconds spent in each phase up to the diagnosed time. */
export function phaseSeconds(spans: readonly PhaseSpan[]): Partial<Record<Phase, number>> {
  const out: Partial<Record<Phase, number>> = {};
  for (const s of spans) out[s.phase] = (out[s.phase] ?? 0) + (s.endT - s.startT);
  return out;
}
