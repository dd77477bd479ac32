/**
 * The one pipeline every source feeds: framed line -> parser -> plausibility -> time base ->
 * run engine. Live ports, the simulator, replayed files and recorded runs all go through this
 * object, so there is no second implementation of any step.
 */
import type { ResolvedProfile } from '../chemistry/types';
import { createLineParser } from '../telemetry/parse-line';
import type { LineResult, RejectReason } from '../telemetry/types';
import {
  implausibility,
  isPlausible as isPlausibleImport,
  onlyTemperatureImplausible,
  plausibilityLimits,
} from './plausibility';
import { createRunEngine } from './run-engine';
import { PLACED_GLITCH as GLITCH, RunTimeBase, type ReceiveClock } from './time-base';
import type { EngineEvent, RunState, RunSummary, TimedSample } from './types';

// Module-local copies: under CommonJS interop (tests, tsx) an imported binding is read through
// a getter on every use, which the per-line path should not pay.
const isPlausible = isPlausibleImport;
const PLACED_GLITCH = GLITCH;

export interface LineOutcome {
  result: LineResult;
  /** The accepted sample on the run's time axis; null for anything else. */
  sample: TimedSample | null;
  events: EngineEvent[];
  /** The line's device time was out of order or corrupt: the sample was placed with no elapsed time. */
  timeGlitch?: boolean;
}

export interface PipelineOptions {
  /**
   * `host`: receive times are the host's clock (live ports); `lines`: they only count lines
   * (a replayed file); `auto` (default): a receive clock starting before 2001 counts lines.
   */
  receiveClock?: ReceiveClock;
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

export function createPipeline(profile: ResolvedProfile, options: PipelineOptions = {}): Pipeline {
  const parser = createLineParser({ fields: profile.fields, thermistor: profile.thermistor });
  const engine = createRunEngine(profile);
  const clock = new RunTimeBase(options.receiveClock ?? 'auto');
  const limits = plausibilityLimits(profile);
  const rejected: Partial<Record<RejectReason, number>> = {};
  let lines = 0;
  let rejectedTotal = 0;
  let typicalS = NaN;

  function accept(result: LineResult, rxS: number): LineOutcome {
    if (result.kind === 'sample') {
      lines++;
      const sample = result.sample as TimedSample;
      if (isPlausible(sample, limits)) return feed(result, sample, rxS);
      return refuseImplausible(sample, rxS, implausibility(sample, limits) as string);
    }
    if (result.kind !== 'blank') lines++;
    if (result.kind === 'rejected') {
      rejectedTotal++;
      rejected[result.reason] = (rejected[result.reason] ?? 0) + 1;
    }
    return { result, sample: null, events: NO_EVENTS };
  }

  /**
   * An impossible value: counted and kept in the raw record like any rejected line; never
   * integrated. An impossible temperature alone still tells the engine its temperature
   * protection is blind.
   */
  function refuseImplausible(sample: TimedSample, rxS: number, why: string): LineOutcome {
    const blind = onlyTemperatureImplausible(sample, limits);
    const result: LineResult = { kind: 'rejected', reason: 'implausible', detail: why };
    rejectedTotal++;
    rejected.implausible = (rejected.implausible ?? 0) + 1;
    const events = blind && clock.hasStarted ? engine.blindSensor(clock.at(rxS), why) : NO_EVENTS;
    return { result, sample: null, events };
  }

  /** A plausible sample: placed on the run's time axis and fed to the engine. */
  function feed(result: LineResult, sample: TimedSample, rxS: number): LineOutcome {
    sample.t = clock.place(rxS, sample.deviceS);
    const m = clock.typicalIntervalS;
    if (m !== typicalS && m === m) {
      typicalS = m;
      engine.setTypicalInterval(m);
    }
    const events = engine.push(sample);
    if (clock.lastKind === PLACED_GLITCH) return { result, sample, events, timeGlitch: true };
    return { result, sample, events };
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
      const out: RunSummary = { ...engine.summary(), lines, rejected: rejectedTotal };
      // Said only when there were any, so a clean run reads the same from every source.
      if (clock.glitches > 0) out.timeGlitches = clock.glitches;
      if (clock.resets > 0) out.clockResets = clock.resets;
      return out;
    },
    rejectCounts: () => ({ ...rejected }),
  };
}
