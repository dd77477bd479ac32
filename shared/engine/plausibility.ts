/**
 * Physically impossible values (protocol: reject reason `implausible`): a line carrying one is
 * rejected, counted and kept in the raw record, and never reaches the engine's integrals.
 * The limits are wide on purpose: an implausible value is a corrupt line (noise on a long
 * cable, a unit the device left out), never a real fault, which must reach the alarms.
 */
import type { ResolvedProfile } from '../chemistry/types';
import type { Sample } from '../telemetry/types';

/**
 * Temperature a pack sensor can report: −55…150 °C, the full operating range of common
 * silicon sensors and NTC assemblies (common practice); anything outside is a blind sensor.
 */
export const TEMP_MIN_C = -55;
export const TEMP_MAX_C = 150;

export interface PlausibilityLimits {
  /** Pack voltage beyond ±this is impossible (5 × the chemistry's overvoltage limit per cell). */
  maxVbatV: number;
  /** |ibat| and |iin| beyond this are impossible. */
  maxCurrentA: number;
  /** Source voltage beyond this is impossible. */
  maxVinV: number;
}

function sizeKnown(p: ResolvedProfile): boolean {
  const assumed = p.defaulted ?? [];
  return !(assumed.includes('capacityAh') && assumed.includes('chargeCurrentA'));
}

export function plausibilityLimits(p: ResolvedProfile): PlausibilityLimits {
  const vPerCell = Math.max(p.overvoltageVPerCell, p.regulationVPerCell);
  return {
    // Five times the chemistry's highest limit per cell: far above anything a charger can put on
    // the pack, yet a pack with a few more cells than the profile says still reaches the
    // overvoltage alarm, which is where a wrong cell count belongs (common practice).
    maxVbatV: 5 * vPerCell * p.cells,
    // Ten times the charge current or five times the capacity (5C), at least 0.5 A so a sensor
    // offset on a tiny cell is never "impossible" (common practice).
    // Without a stated capacity or charge current (an assumed profile) the pack's size is
    // unknown: only currents beyond any bench charger, 1 kA, are impossible (common practice).
    maxCurrentA: sizeKnown(p) ? Math.max(10 * p.chargeCurrentA, 5 * p.capacityAh, 0.5) : 1000,
    // Five times the pack's overvoltage, at least 100 V (common practice: no bench source beyond).
    maxVinV: Math.max(100, 5 * vPerCell * p.cells),
  };
}

/**
 * Every value of the sample is physically possible: the usual case, asked first and kept
 * small so it costs a few comparisons. The same limits as `implausibility`, which words the
 * first value that breaks them.
 */
export function isPlausible(s: Sample, lim: PlausibilityLimits): boolean {
  const v = s.vbatV;
  const i = s.ibatA;
  const temp = s.tempC;
  const vin = s.vinV;
  const iin = s.iinA;
  const t = s.deviceS;
  return (
    (v === undefined || (v >= -lim.maxVbatV && v <= lim.maxVbatV)) &&
    (i === undefined || (i >= -lim.maxCurrentA && i <= lim.maxCurrentA)) &&
    (temp === undefined || (temp >= TEMP_MIN_C && temp <= TEMP_MAX_C)) &&
    (vin === undefined || (vin >= -lim.maxVinV && vin <= lim.maxVinV)) &&
    (iin === undefined || (iin >= -lim.maxCurrentA && iin <= lim.maxCurrentA)) &&
    (t === undefined || Number.isFinite(t))
  );
}

/** Why a sample is implausible, in words for the Line feed; null when it is plausible. */
export function implausibility(s: Sample, lim: PlausibilityLimits): string | null {
  const v = s.vbatV;
  if (v !== undefined && !(v >= -lim.maxVbatV && v <= lim.maxVbatV))
    return `vbat=${fmt(v)} V is impossible for this pack (limit ${lim.maxVbatV.toFixed(1)} V); line kept in the raw record, not used. If the device prints millivolts, set "unit": "mV" for vbat in the profile.`;
  const i = s.ibatA;
  if (i !== undefined && !(i >= -lim.maxCurrentA && i <= lim.maxCurrentA))
    return `ibat=${fmt(i)} A is far beyond the charge current (limit ±${lim.maxCurrentA.toFixed(2)} A); line kept in the raw record, not used. If the device prints milliamps, set "unit": "mA" for ibat in the profile.`;
  const temp = s.tempC;
  if (temp !== undefined && !(temp >= TEMP_MIN_C && temp <= TEMP_MAX_C))
    return `temp=${fmt(temp)} °C is outside ${TEMP_MIN_C}…${TEMP_MAX_C} °C: the temperature sensor is not reading the pack; line kept in the raw record, not used. Check the sensor and its wiring.`;
  const vin = s.vinV;
  if (vin !== undefined && !(vin >= -lim.maxVinV && vin <= lim.maxVinV))
    return `vin=${fmt(vin)} V is impossible for a charger source (limit ${lim.maxVinV.toFixed(0)} V); line kept in the raw record, not used.`;
  const iin = s.iinA;
  if (iin !== undefined && !(iin >= -lim.maxCurrentA && iin <= lim.maxCurrentA))
    return `iin=${fmt(iin)} A is impossible for this charger (limit ±${lim.maxCurrentA.toFixed(2)} A); line kept in the raw record, not used.`;
  const t = s.deviceS;
  if (t !== undefined && !Number.isFinite(t))
    return `t=${fmt(t)} is not a time; line kept in the raw record, not used.`;
  return null;
}

/** True when the only impossible value of the sample is its temperature (a blind sensor). */
export function onlyTemperatureImplausible(s: Sample, lim: PlausibilityLimits): boolean {
  const temp = s.tempC;
  if (temp === undefined || (temp >= TEMP_MIN_C && temp <= TEMP_MAX_C)) return false;
  return implausibility({ ...s, tempC: undefined }, lim) === null;
}

const fmt = (x: number): string => String(x);
