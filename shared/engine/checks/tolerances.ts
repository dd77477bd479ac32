/**
 * Default `[min, max]` around a nominal design value, for a person who knows the design value
 * but not the limits. Each tolerance names where it comes from; a board's own datasheet wins.
 */
import type { ExpectKey } from '../../chemistry/types';

export interface Tolerance {
  /** Relative half-width, 0.01 = ±1 %. */
  fraction: number;
  source: string;
}

export const DEFAULT_TOLERANCES: Readonly<Partial<Record<ExpectKey, Tolerance>>> = {
  // Regulation accuracy of ±0.5 % to ±1 % over temperature is the usual specification class of
  // single-cell linear Li-ion charger ICs' datasheets; the looser end is used so that divider
  // resistor tolerance (1 % parts) fits too.
  regulationV: { fraction: 0.01, source: "single-cell linear Li-ion charger ICs' datasheets (±0.5-1 %)" },
  // Charge-current accuracy of about ±10 % at the programmed current is the usual class of the same
  // datasheets (programming resistor and sense accuracy together).
  chargeCurrentA: { fraction: 0.1, source: "single-cell linear Li-ion charger ICs' datasheets (±10 %)" },
  preconditionA: { fraction: 0.1, source: "single-cell linear Li-ion charger ICs' datasheets (±10 %)" },
  // Termination comparators are looser at a tenth of the current: ±15 % (common practice).
  terminationA: { fraction: 0.15, source: 'common practice' },
  // Safety timers run from an RC oscillator: ±10 % (common practice, the usual timer accuracy class).
  timerMin: { fraction: 0.1, source: 'common practice' },
  // An MPPT input regulation loop holds its set point within ±2 % (common practice).
  inputV: { fraction: 0.02, source: 'common practice' },
};

/** `[min, max]` for a nominal value with the default tolerance of its key; null when it has none. */
export function nominalRange(key: ExpectKey, nominal: number): [number, number] | null {
  const tol = DEFAULT_TOLERANCES[key];
  if (!tol) return null;
  const half = Math.abs(nominal) * tol.fraction;
  return [round6(nominal - half), round6(nominal + half)];
}

const round6 = (x: number): number => Math.round(x * 1e6) / 1e6;
