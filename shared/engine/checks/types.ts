/**
 * Board checks: what a run measured against what the board was designed to do (the profile's
 * `expect` ranges), and the run's verdict. Exactly the JSON of `taperline check --json`.
 */
import type { ExpectKey, ResolvedProfile } from '../../chemistry/types';
import type { EngineEvent, TimedSample } from '../types';

export type CheckResult = 'pass' | 'fail' | 'not-measured';
export type Verdict = 'pass' | 'fail' | 'incomplete';

export const VERDICTS: readonly Verdict[] = ['pass', 'fail', 'incomplete'];

/** The stretch of the run a value was measured on, so a person can look at the same samples. */
export interface CheckBasis {
  fromT: number;
  toT: number;
  samples: number;
}

export interface Check {
  code: ExpectKey;
  /** The measured value in `unit`; null when it could not be measured (see `note`). */
  measured: number | null;
  min: number;
  max: number;
  unit: string;
  result: CheckResult;
  /** Why it passed, failed or could not be measured, in words and numbers. */
  note: string;
  basis: CheckBasis | null;
}

export interface CheckReport {
  verdict: Verdict;
  checks: Check[];
  board: string | null;
  /** The charger's own fault (fault phase or fault output), which fails the run by itself. */
  fault: { t: number; what: string } | null;
}

export interface CheckInput {
  profile: ResolvedProfile;
  samples: readonly TimedSample[];
  events: readonly EngineEvent[];
  board?: string | null;
}

/** What one key's module returns: a value with the samples it came from, or why there is none. */
export type Measurement =
  | { measured: number; basis: CheckBasis; note: string }
  | { measured: null; basis: null; note: string }
  /** Judged without a number (a timer that never had to act): result decided by the module. */
  | { measured: null; basis: CheckBasis | null; note: string; judged: 'pass' | 'fail' };
