/** The Diagnosis contract: why the fault output lit (docs/codes.md, `diagnose --json`). */
import type { ResolvedProfile } from '../../chemistry/types';
import type { EngineEvent, TimedSample } from '../types';

export type CauseCode =
  | 'damaged-cell'
  | 'weak-source'
  | 'overtemperature'
  | 'thermistor-fault'
  | 'timer-expired'
  | 'overvoltage'
  | 'connection'
  | 'unknown';

export const CAUSE_CODES: readonly CauseCode[] = [
  'damaged-cell',
  'weak-source',
  'overtemperature',
  'thermistor-fault',
  'timer-expired',
  'overvoltage',
  'connection',
  'unknown',
];

/** One candidate explanation. `confidence` ranks causes (0..1); it is a score, not a probability. */
export interface Cause {
  code: CauseCode;
  confidence: number;
  /** What in the history points at this cause, in numbers and times. */
  evidence: string[];
  /** What a person can do next to confirm or fix it. */
  next: string[];
}

/** Exactly the JSON object of `diagnose --json`: causes sorted by confidence, highest first. */
export interface Diagnosis {
  /** The time diagnosed, seconds since the run's first sample. */
  t: number;
  causes: Cause[];
}

export interface DiagnosisInput {
  profile: ResolvedProfile;
  /** Samples in time order (t non-decreasing), as the pipeline produced them. */
  samples: readonly TimedSample[];
  events: readonly EngineEvent[];
  /** Diagnose this time; without it the first fault of the run, else the end of the run. */
  atT?: number;
}
