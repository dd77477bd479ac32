/** Temperature plausibility checks shared by the overtemperature and thermistor-fault modules. */
import type { ResolvedProfile } from '../../chemistry/types';
import type { TimedSample } from '../types';

/**
 * A pack's thermal mass keeps it from changing by more than a few degrees a minute; a reading
 * that moves 5 °C in one second (or 20 °C within two minutes) is the sensor, not the pack.
 * Common practice, not a published limit.
 */
export const IMPOSSIBLE_RATE_C_PER_S = 5;
export const IMPOSSIBLE_STEP_C = 20;
export const IMPOSSIBLE_STEP_WINDOW_S = 120;
/** Usual range of an NTC thermistor channel; readings outside it are the sensor (common practice). */
export const SENSOR_RANGE_C: [number, number] = [-40, 125];

export interface TemperatureJump {
  t: number;
  fromC: number;
  toC: number;
  dtS: number;
}

export function isImpossibleJump(fromC: number, toC: number, dtS: number): boolean {
  const step = Math.abs(toC - fromC);
  if (step >= IMPOSSIBLE_RATE_C_PER_S && step / Math.max(dtS, 1) >= IMPOSSIBLE_RATE_C_PER_S) return true;
  return step >= IMPOSSIBLE_STEP_C && dtS <= IMPOSSIBLE_STEP_WINDOW_S;
}

/** Jumps between neighbouring temperature readings of the history [0, end). */
export function temperatureJumps(samples: readonly TimedSample[], end: number): TemperatureJump[] {
  const jumps: TemperatureJump[] = [];
  let prev: TimedSample | null = null;
  for (let i = 0; i < end; i++) {
    const s = samples[i];
    if (s.tempC === undefined || !Number.isFinite(s.tempC)) continue;
    if (prev) {
      const dtS = s.t - prev.t;
      if (isImpossibleJump(prev.tempC as number, s.tempC, dtS)) {
        jumps.push({ t: s.t, fromC: prev.tempC as number, toC: s.tempC, dtS });
      }
    }
    prev = s;
  }
  return jumps;
}

/** The ADC rails of the profile's thermistor input: [low, high], or null when `ntc` is read as ohms. */
export function ntcRails(profile: ResolvedProfile): { lowRaw: number; highRaw: number; unit: string } | null {
  const th = profile.thermistor;
  if (!th) return null;
  if (th.pullupOhm === undefined && th.pulldownOhm === undefined) {
    // Read as ohms: a short reads ~0 Ω, an open wire reads as a huge resistance.
    return { lowRaw: 1, highRaw: 1e7, unit: 'Ω' };
  }
  // 12-bit ADC when the profile does not say (common practice for small microcontrollers).
  const adcMax = th.adcMax ?? 4095;
  const margin = Math.max(1, Math.round(adcMax * 0.002));
  return { lowRaw: margin, highRaw: adcMax - margin, unit: 'counts' };
}
