/** The run engine's contract: samples in, state and events out (docs/codes.md). */
import type { Sample } from '../telemetry/types';

export type Phase = 'precondition' | 'cc' | 'cv' | 'done' | 'fault' | 'idle';
export const PHASES: readonly Phase[] = ['precondition', 'cc', 'cv', 'done', 'fault', 'idle'];

export type AlarmCode =
  | 'overtemp'
  | 'undertemp'
  | 'overvoltage'
  | 'stall'
  | 'precondition-timeout'
  | 'timer'
  | 'input-low'
  | 'silence'
  | 'fault-pin'
  | 'reverse-current'
  | 'sensor-fault'
  | 'contact';
export const ALARM_CODES: readonly AlarmCode[] = [
  'overtemp',
  'undertemp',
  'overvoltage',
  'stall',
  'precondition-timeout',
  'timer',
  'input-low',
  'silence',
  'fault-pin',
  'reverse-current',
  'sensor-fault',
  'contact',
];

export type AlarmLevel = 'warn' | 'critical';

/** A sample placed on the run's time axis: `t` = seconds since the run's first sample. */
export interface TimedSample extends Sample {
  t: number;
}

export interface PhaseEvent {
  type: 'phase';
  t: number;
  phase: Phase;
}
export interface AlarmEvent {
  type: 'alarm';
  t: number;
  code: AlarmCode;
  level: AlarmLevel;
  message: string;
}
export interface AlarmClearEvent {
  type: 'alarm-clear';
  t: number;
  code: AlarmCode;
}
/**
 * Telemetry stopped arriving (unplug, or no accepted line for longer than `silenceS`) and, when
 * `endT` is set, came back after `durationS`. Nothing is integrated across a gap.
 */
export interface GapEvent {
  type: 'gap';
  t: number;
  endT: number | null;
  /** endT − t once the gap has ended. */
  durationS?: number;
  reason: string;
}
export type EngineEvent = PhaseEvent | AlarmEvent | AlarmClearEvent | GapEvent;

export interface RunMetrics {
  /** Charge delivered into the pack (trapezoid integration of ibat). */
  ah: number;
  /** Energy delivered into the pack. */
  wh: number;
  /** Energy taken from the source (vin * iin), when the source is reported. */
  sourceWh: number | null;
  /** wh / sourceWh over the intervals where both are known, 0..1. */
  efficiency: number | null;
  /** Estimated state of charge, 0..100, null when unknown. */
  socPct: number | null;
  /** Estimated seconds to full: remaining CC part + CV taper; null when unknown. */
  etaS: number | null;
  etaCcS: number | null;
  etaCvS: number | null;
  /** Internal resistance from the latest current step, ohms (whole pack). */
  internalResistanceOhm: number | null;
  /** Mean |vin - inputSetpointV| / inputSetpointV while charging, 0..1; null without a set point. */
  mpptErrorFraction: number | null;
}

export interface RunState {
  t: number;
  phase: Phase;
  phaseSinceT: number;
  last: TimedSample | null;
  metrics: RunMetrics;
  /** Alarms raised and not cleared, one per code. */
  activeAlarms: AlarmEvent[];
}

export interface RunSummary {
  durationS: number;
  ah: number;
  wh: number;
  phaseS: Partial<Record<Phase, number>>;
  lines: number;
  rejected: number;
  /** Lines whose device time was out of order or corrupt: placed with no elapsed time (absent = none). */
  timeGlitches?: number;
  /** Device reboots the following lines confirmed, bridged (absent = none). */
  clockResets?: number;
}

/** One object per run: the same for live ports, the simulator and replays. */
export interface RunEngine {
  /** Feed one sample (t non-decreasing). Returns the events it raised. */
  push(sample: TimedSample): EngineEvent[];
  /** Time passed with no accepted sample (live ports): raises `silence` when due. */
  tick(t: number): EngineEvent[];
  /**
   * The shell knows telemetry was interrupted (port unplugged) from startT; endT null while
   * it lasts. The engine records it once and does not also call it `stall` or `silence`.
   */
  gap(startT: number, endT: number | null, reason: string): EngineEvent[];
  /**
   * A line whose temperature was impossible was rejected before reaching the engine: the
   * temperature protection is blind at run time t (raises `sensor-fault` while charging).
   */
  blindSensor(t: number, detail: string): EngineEvent[];
  /** The typical interval between samples (from the time base), for neighbour comparisons. */
  setTypicalInterval(intervalS: number): void;
  state(): RunState;
  summary(): Omit<RunSummary, 'lines' | 'rejected' | 'timeGlitches' | 'clockResets'>;
}
