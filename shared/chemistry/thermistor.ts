/**
 * NTC thermistor conversion: raw reading (ADC counts or ohms) -> resistance -> temperature,
 * and the inverse for the simulator. Pure functions; nothing here throws.
 *
 * Models:
 * - Beta: R(T) = R25 * exp(B * (1/T - 1/T0)), T in kelvin, T0 = 298.15 K
 *   (MathWorks Simscape "Thermistor" block documentation).
 * - Steinhart-Hart: 1/T = A + B ln R + C (ln R)^3 (J. S. Steinhart and S. R. Hart,
 *   "Calibration curves for thermistors", Deep Sea Research 15 (1968) 497-503).
 *
 * Wiring (docs/profile.md): `pullupOhm` = fixed resistor from the ADC reference to the
 * sense node, NTC from the node to ground; `pulldownOhm` = fixed resistor to ground, NTC on
 * top; neither = the reading is already in ohms. The ADC is taken as ratiometric with
 * `adcMax` counts at the reference voltage (common practice for a divider fed from the
 * ADC's own reference).
 */
import type { ThermistorModel } from '../telemetry/types';

export const KELVIN_OFFSET = 273.15;
const T0_K = 298.15;
/** Full scale used when a model gives a divider but no `adcMax`: a 12-bit ADC (common practice). */
export const DEFAULT_ADC_MAX = 4095;

export type ThermistorFailure = 'open' | 'short' | 'out-of-range' | 'bad-model';

export type ThermistorResult =
  { ok: true; tempC: number; ohm: number } | { ok: false; reason: ThermistorFailure; ohm: number };

export type ResistanceResult =
  { ok: true; ohm: number } | { ok: false; reason: ThermistorFailure; ohm: number };

/** Divider wiring of a model; `null` when the reading is in ohms. */
export interface DividerWiring {
  position: 'pullup' | 'pulldown';
  fixedOhm: number;
  adcMax: number;
}

const isPositiveFinite = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v) && v > 0;

export function dividerOf(model: ThermistorModel): DividerWiring | null {
  const adcMax = isPositiveFinite(model.adcMax) ? model.adcMax : DEFAULT_ADC_MAX;
  if (model.pullupOhm !== undefined) return { position: 'pullup', fixedOhm: model.pullupOhm, adcMax };
  if (model.pulldownOhm !== undefined) return { position: 'pulldown', fixedOhm: model.pulldownOhm, adcMax };
  return null;
}

/**
 * NTC resistance from ADC counts. A reading at a rail means the divider has lost the NTC:
 * with a pull-up, full scale = open NTC and zero = shorted NTC; with a pull-down it is the
 * other way round.
 */
export function resistanceFromAdc(counts: number, wiring: DividerWiring): ResistanceResult {
  const { fixedOhm, adcMax, position } = wiring;
  if (!isPositiveFinite(fixedOhm) || !isPositiveFinite(adcMax))
    return { ok: false, reason: 'bad-model', ohm: NaN };
  if (!Number.isFinite(counts) || counts < 0 || counts > adcMax)
    return { ok: false, reason: 'out-of-range', ohm: NaN };
  if (position === 'pullup') {
    if (counts >= adcMax) return { ok: false, reason: 'open', ohm: Infinity };
    if (counts <= 0) return { ok: false, reason: 'short', ohm: 0 };
    return { ok: true, ohm: (fixedOhm * counts) / (adcMax - counts) };
  }
  if (counts <= 0) return { ok: false, reason: 'open', ohm: Infinity };
  if (counts >= adcMax) return { ok: false, reason: 'short', ohm: 0 };
  return { ok: true, ohm: (fixedOhm * (adcMax - counts)) / counts };
}

/** ADC counts a divider would read for an NTC of `ohm` (not rounded; the caller rounds). */
export function adcFromResistance(ohm: number, wiring: DividerWiring): number {
  const { fixedOhm, adcMax, position } = wiring;
  if (!(ohm >= 0) || !isPositiveFinite(fixedOhm) || !isPositiveFinite(adcMax)) return NaN;
  if (ohm === Infinity) return position === 'pullup' ? adcMax : 0;
  return position === 'pullup' ? (adcMax * ohm) / (fixedOhm + ohm) : (adcMax * fixedOhm) / (fixedOhm + ohm);
}

/** Beta model: temperature from resistance. NaN for a non-positive resistance. */
export function betaTemperatureC(ohm: number, r25: number, beta: number): number {
  if (!(ohm > 0) || !isPositiveFinite(r25) || !isPositiveFinite(beta) || ohm === Infinity) return NaN;
  return 1 / (1 / T0_K + Math.log(ohm / r25) / beta) - KELVIN_OFFSET;
}

/** Beta model: resistance at a temperature. */
export function betaResistanceOhm(tempC: number, r25: number, beta: number): number {
  const tK = tempC + KELVIN_OFFSET;
  if (!(tK > 0) || !isPositiveFinite(r25) || !isPositiveFinite(beta)) return NaN;
  return r25 * Math.exp(beta * (1 / tK - 1 / T0_K));
}

/** Steinhart-Hart: temperature from resistance. */
export function steinhartHartTemperatureC(ohm: number, a: number, b: number, c: number): number {
  if (!(ohm > 0) || ohm === Infinity) return NaN;
  const lnR = Math.log(ohm);
  const invT = a + b * lnR + c * lnR * lnR * lnR;
  if (!(invT > 0)) return NaN;
  return 1 / invT - KELVIN_OFFSET;
}

/**
 * Steinhart-Hart inverse: solve C x^3 + B x + (A - 1/T) = 0 for x = ln R. With B, C > 0
 * (every real NTC) the cubic has exactly one real root, given by Cardano's formula.
 */
export function steinhartHartResistanceOhm(tempC: number, a: number, b: number, c: number): number {
  const tK = tempC + KELVIN_OFFSET;
  if (!(tK > 0) || !Number.isFinite(a) || !Number.isFinite(b) || !Number.isFinite(c)) return NaN;
  const d = a - 1 / tK;
  let lnR: number;
  if (c === 0) {
    if (b === 0) return NaN;
    lnR = -d / b;
  } else {
    const p = b / c;
    const q = d / c;
    const disc = Math.sqrt((p / 3) ** 3 + (q / 2) ** 2);
    if (Number.isNaN(disc)) return NaN;
    lnR = Math.cbrt(-q / 2 + disc) + Math.cbrt(-q / 2 - disc);
  }
  const ohm = Math.exp(lnR);
  return Number.isFinite(ohm) ? ohm : NaN;
}

function modelIsValid(model: ThermistorModel): boolean {
  if (model.model === 'beta') return isPositiveFinite(model.r25) && isPositiveFinite(model.beta);
  return Number.isFinite(model.a) && Number.isFinite(model.b) && Number.isFinite(model.c);
}

/** Temperature of an NTC of known resistance under a model. */
export function temperatureFromResistance(model: ThermistorModel, ohm: number): ThermistorResult {
  if (!modelIsValid(model)) return { ok: false, reason: 'bad-model', ohm };
  if (ohm === Infinity) return { ok: false, reason: 'open', ohm };
  if (!(ohm > 0)) return { ok: false, reason: Number.isNaN(ohm) ? 'out-of-range' : 'short', ohm };
  const tempC =
    model.model === 'beta'
      ? betaTemperatureC(ohm, model.r25, model.beta)
      : steinhartHartTemperatureC(ohm, model.a, model.b, model.c);
  if (!Number.isFinite(tempC)) return { ok: false, reason: 'out-of-range', ohm };
  return { ok: true, tempC, ohm };
}

/**
 * Temperature from a raw `ntc` reading: ADC counts through the model's divider, or ohms
 * when the model has no divider or `readingIsOhm` says the device printed a resistance.
 */
export function thermistorTemperature(
  model: ThermistorModel,
  reading: number,
  readingIsOhm = false,
): ThermistorResult {
  const wiring = readingIsOhm ? null : dividerOf(model);
  if (wiring === null) return temperatureFromResistance(model, reading);
  const r = resistanceFromAdc(reading, wiring);
  if (!r.ok) return r;
  return temperatureFromResistance(model, r.ohm);
}

/** NTC resistance at a temperature under a model (NaN when the model or temperature is invalid). */
export function resistanceFromTemperature(model: ThermistorModel, tempC: number): number {
  if (!modelIsValid(model)) return NaN;
  return model.model === 'beta'
    ? betaResistanceOhm(tempC, model.r25, model.beta)
    : steinhartHartResistanceOhm(tempC, model.a, model.b, model.c);
}

/**
 * What a device with this thermistor would print as `ntc` at a temperature: ADC counts
 * (rounded, clamped to 0..adcMax) through the divider, or ohms without one.
 */
export function thermistorReading(model: ThermistorModel, tempC: number): number {
  const ohm = resistanceFromTemperature(model, tempC);
  const wiring = dividerOf(model);
  if (wiring === null) return ohm;
  const counts = adcFromResistance(ohm, wiring);
  if (Number.isNaN(counts)) return NaN;
  return Math.min(wiring.adcMax, Math.max(0, Math.round(counts)));
}
