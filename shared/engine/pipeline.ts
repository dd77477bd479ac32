/**
 * The one pipeline every source feeds: framed line -> parser -> time base -> run engine.
 * Live ports, the simulator, replayed files and recorded runs all go through this object,
 * so there is no second implementation of any step.
 */
import type { ResolvedProfile } from '../chemistry/types';
import { createLineParser } from '../telemetry/parse-line';
import type { LineResult, RejectReason } from '../telemetry/types';
import { createRunEngine } from './run-engine';
import { RunTimeBase } from './time-base';
import type { EngineEvent, RunState, RunSummary, TimedSample } from './types';

export interface LineOutcome {
  result: LineResult;
  /** The accepted sample on the run's time axis; null for anything else. */
  sample: TimedSample | null;
  events: EngineEvent[];
}

export interface Pipeline {
  readonly profile: ResolvedProfile;
  pushLine(text: string, rxS: number, tooLong?: boolean): LineOutcome;
  /** The same for a line still in bytes, bytes[from, to) (replay's fast path). */
  pushBytes(bytes: Uint8Array, from: number, to: number, rxS: number, tooLong?: boolean): LineOutcome;
  /** Time passes with no line (live sources): silence checks on the receive clock. */
  tick(rxS: number): EngineEvent[];
  /** The source knows telemetry was interrupted from startRxS (endRxS null while it lasts). */
  gap(startRxS: number, endRxS: number | null, reason: string): EngineEvent[];
  /** Run time of a receive time. */
  timeOf(rxS: number): number;
  state(): RunState;
  summary(): RunSummary;
  rejectCounts(): Partial<Record<RejectReason, number>>;
}

const NO_EVENTS: EngineEvent[] = [];

export function createPipeline(profile: ResolvedProfile): Pipeline {
  const parser = createLineParser({ fields: profile.fields, thermistor: profile.thermistor });
  const engine = createRunEngine(profile);
  const clock = new RunTimeBase();
  const rejected: Partial<Record<RejectReason, number>> = {};
  let lines = 0;
  let rejectedTotal = 0;

  function accept(result: LineResult, rxS: number): LineOutcome {
    if (result.kind !== 'blank') lines++;
    if (result.kind === 'rejected') {
      rejectedTotal++;
      rejected[result.reason] = (rejected[result.reason] ?? 0) + 1;
      return { result, sample: null, events: NO_EVENTS };
    }
    if (result.kind !== 'sample') return { result, sample: null, events: NO_EVENTS };
    const sample = result.sample as TimedSample;
    sample.t = clock.place(rxS, sample.deviceS);
    return { result, sample, events: engine.push(sample) };
  }

  return {
    profile,
    pushLine(text, rxS, tooLong = false) {
      return accept(parser.parse(text, rxS, tooLong), rxS);
    },
    pushBytes(bytes, from, to, rxS, tooLong = false) {
      return accept(parser.parseBytes(bytes, from, to, rxS, tooLong), rxS);
    },
    tick(rxS) {
      return clock.hasStarted ? engine.tick(clock.at(rxS)) : NO_EVENTS;
    },
    gap(startRxS, endRxS, reason) {
      if (!clock.hasStarted) return NO_EVENTS;
      return engine.gap(clock.at(startRxS), endRxS === null ? null : clock.at(endRxS), reason);
    },
    timeOf(rxS) {
      return clock.at(rxS);
    },
    state: () => engine.state(),
    summary() {
      return { ...engine.summary(), lines, rejected: rejectedTotal };
    },
    rejectCounts: () => ({ ...rejected }),
  };
}
