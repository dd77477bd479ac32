/** Profile types: what is being charged and how it reports (docs/profile.md). */
import type { FieldMap, ThermistorModel } from '../telemetry/types';

export type Chemistry = 'li-ion' | 'li-ion-hv' | 'lifepo4' | 'lead-acid' | 'nimh';

export const CHEMISTRIES: readonly Chemistry[] = ['li-ion', 'li-ion-hv', 'lifepo4', 'lead-acid', 'nimh'];

/**
 * A profile with every limit filled in, from the user's JSON or else the chemistry's
 * defaults. This is what the parser, engine and diagnosis read.
 */
export interface ResolvedProfile {
  name: string;
  chemistry: Chemistry;
  cells: number;
  capacityAh: number;
  chargeCurrentA: number;
  terminationA: number;
  /** Safety timer; null = no timer. */
  timerMin: number | null;
  tempWindowC: [number, number];
  /** MPPT / input regulation set point of the source; null = not set. */
  inputSetpointV: number | null;
  regulationVPerCell: number;
  /** Lead-acid float voltage per cell at 25 C; null for chemistries without float. */
  floatVPerCell: number | null;
  overvoltageVPerCell: number;
  preconditionVPerCell: number;
  preconditionA: number;
  preconditionTimeoutMin: number;
  stallMin: number;
  silenceS: number;
  /** NiMH only: voltage drop per cell that ends the charge; null elsewhere. */
  minusDeltaVPerCell: number | null;
  /** NiMH only: temperature rise rate that ends the charge; null elsewhere. */
  dTdtCPerMin: number | null;
  /** Lead-acid only: set point change per degree per cell (negative); null elsewhere. */
  tempCompVPerCPerCell: number | null;
  fields: FieldMap;
  thermistor?: ThermistorModel;
  /** What the board was designed to do: `[min, max]` per key, in the key's unit (board checks). */
  expect?: ExpectRanges;
  /** Keys filled from the chemistry's defaults (or assumed) rather than given by the profile. */
  defaulted?: string[];
}

/** The `expect` keys of a profile, each in the unit its name carries (efficiency 0..1). */
export type ExpectKey =
  | 'chargeCurrentA'
  | 'regulationV'
  | 'terminationA'
  | 'preconditionA'
  | 'timerMin'
  | 'efficiency'
  | 'tempRiseC'
  | 'inputV'
  | 'chargeTimeMin';

export type ExpectRanges = Partial<Record<ExpectKey, [number, number]>>;

/** Result of validating a profile. `error` names the bad key and why. */
export type ProfileResult =
  { ok: true; profile: ResolvedProfile } | { ok: false; error: string; key: string };
