/** Types of the simulator's public surface: scenarios, their profiles and expected outcomes. */
import type { Chemistry, ExpectRanges } from '@shared/chemistry/types';
import type { ThermistorModel } from '@shared/telemetry/types';
import type { AlarmCode, Phase } from '@shared/engine/types';
import type { BenchParams } from './bench';

/** A profile as a user writes it (docs/profile.md): only the keys the demos use. */
export interface ProfileJson {
  name: string;
  chemistry: Chemistry;
  cells: number;
  capacityAh?: number;
  chargeCurrentA?: number;
  terminationA?: number;
  timerMin?: number;
  tempWindowC?: [number, number];
  inputSetpointV?: number;
  regulationVPerCell?: number;
  preconditionVPerCell?: number;
  preconditionA?: number;
  preconditionTimeoutMin?: number;
  thermistor?: ThermistorModel;
  /** What the board was designed to do (board checks). */
  expect?: ExpectRanges;
}

/** What the run should show when its lines go through Taperline's pipeline. */
export interface ExpectedOutcome {
  /** In words, for people. */
  summary: string;
  /** Phases that must appear, in this order (others may come between). */
  phases: Phase[];
  /** Alarm codes that must be raised. */
  alarms: AlarmCode[];
  /** Alarm codes that must not be raised at the critical level. */
  noCritical: boolean;
  /** The charger's fault output must (true) or must not (false) be asserted. */
  fault: boolean;
}

export interface Scenario {
  name: string;
  /** One line, for `simulate --list`. */
  description: string;
  durationS: number;
  profile: ProfileJson;
  bench: BenchParams;
  /** The firmware prints raw thermistor counts (`ntc`) instead of `temp` unless told otherwise. */
  reportsNtc: boolean;
  /** The board under test's id, printed by the firmware at boot (`# board=… fw=…`). */
  board?: string;
  expected: ExpectedOutcome;
}
