/**
 * The numbers the engine works with, derived once from a resolved profile so the per-sample
 * path only compares numbers. Pack-level values are per cell × cells.
 */
import type { ResolvedProfile } from '../chemistry/types';
import { chemistryHasCv } from '../chemistry/defaults';

export interface EngineLimits {
  cells: number;
  capacityAh: number;
  /** SoC is withheld when the capacity was assumed rather than given. */
  capacityKnown: boolean;
  setA: number;
  terminationA: number;
  /** Current that counts as "charge flowing" when not charging / while charging (hysteresis). */
  flowOnA: number;
  flowOffA: number;
  /** Current that takes a finished charge back to charging (a top-up or a load on a float). */
  resumeA: number;
  /** Precondition is told from CC by a current at most this (a charger that skips precondition runs full current). */
  preconditionMaxA: number;
  reverseA: number;
  hasCv: boolean;
  isLeadAcid: boolean;
  isNimh: boolean;
  regulationVPerCell: number;
  floatVPerCell: number | null;
  tempCompVPerCPerCell: number | null;
  /** CV is entered within this fraction under regulation and left below the wider one. */
  cvEnterFraction: number;
  cvExitFraction: number;
  floatBandFraction: number;
  preconditionVPerCell: number;
  preconditionExitVPerCell: number;
  overvoltageVPerCell: number;
  overvoltageClearVPerCell: number;
  tempLowC: number;
  tempHighC: number;
  /**
   * Above this, overtemp is critical; between tempHighC and it, a warning. Equal to tempHighC
   * except for NiMH, whose charge window (0–40 °C) is the rapid-charge range and whose cut-off
   * is higher (see deriveLimits).
   */
  tempCutoffC: number;
  tempHysteresisC: number;
  inputSetpointV: number | null;
  /** Fraction over the set point still counted "at" it, and the clear threshold. */
  inputAtFraction: number;
  inputClearFraction: number;
  phaseDebounceS: number;
  stallS: number;
  stallRiseVPerCell: number;
  stallRiseAh: number;
  silenceS: number;
  preconditionTimeoutS: number;
  timerS: number | null;
  minusDeltaVPerCell: number | null;
  dTdtCPerMin: number | null;
  /** NiMH: −ΔV / dT/dt are ignored for this long after CC starts. */
  nimhMaskS: number;
  /** Internal resistance: a current step at least this large between adjacent samples... */
  irStepA: number;
  /** ...no further apart than this. */
  irMaxDtS: number;
}

/**
 * Smallest current change between adjacent samples that counts as a step for internal
 * resistance (R = ΔV/ΔI): a fifth of the set current, at least 50 mA, so the step stands out of
 * sense-amplifier noise (common practice). The engine and the diagnosis both use this one rule.
 */
export function resistanceStepA(p: ResolvedProfile): number {
  return Math.max(0.05, 0.2 * p.chargeCurrentA);
}

/** NiMH absolute temperature cut-off for A, AA and D cells: Panasonic NiMH charge methods (published). */
export const NIMH_CUTOFF_C = 55;

export function deriveLimits(p: ResolvedProfile): EngineLimits {
  const c = p.capacityAh;
  const hasCv = chemistryHasCv(p.chemistry);
  // "Meaningful current": C/100, but never above a quarter of the smallest current the profile
  // expects (common practice: above a sense amplifier's offset, well below any charge stage, so a
  // weak panel's trickle still counts as charging).
  const flowOnA = Math.min(0.01 * c, 0.25 * p.preconditionA, 0.25 * p.terminationA);
  return {
    cells: p.cells,
    capacityAh: c,
    capacityKnown: !(p.defaulted ?? []).includes('capacityAh'),
    setA: p.chargeCurrentA,
    terminationA: p.terminationA,
    flowOnA,
    flowOffA: 0.6 * flowOnA,
    resumeA: Math.min(2 * p.terminationA, 0.5 * (p.terminationA + p.chargeCurrentA)),
    preconditionMaxA: Math.min(1.5 * p.preconditionA, 0.5 * (p.preconditionA + p.chargeCurrentA)),
    // Reverse current beyond C/50 (docs/codes.md).
    reverseA: c / 50,
    hasCv,
    isLeadAcid: p.chemistry === 'lead-acid',
    isNimh: p.chemistry === 'nimh',
    regulationVPerCell: p.regulationVPerCell,
    floatVPerCell: p.floatVPerCell,
    tempCompVPerCPerCell: p.tempCompVPerCPerCell,
    // Chargers regulate to better than ±1 % (Junlee blog; Battsys 18650 spec 4.200 ± 0.049 V —
    // published), so "at regulation" is within 1 %; leaving needs a 2 % drop (hysteresis).
    cvEnterFraction: 0.01,
    cvExitFraction: 0.02,
    // Float is ~4 % under absorption for lead-acid (2.30 vs 2.40 V); ±1.5 % tells them apart.
    floatBandFraction: 0.015,
    preconditionVPerCell: p.preconditionVPerCell,
    preconditionExitVPerCell: p.preconditionVPerCell * 1.01,
    overvoltageVPerCell: p.overvoltageVPerCell,
    // Clears 0.5 % under the limit so a pack sitting on it does not chatter.
    overvoltageClearVPerCell: p.overvoltageVPerCell * 0.995,
    tempLowC: p.tempWindowC[0],
    tempHighC: p.tempWindowC[1],
    // NiMH: rapid charge within 0–40 °C, absolute temperature cut-off 55 °C for A/AA/D cells
    // (Panasonic "Charge Methods for Nickel Metal Hydride Batteries", published); the end-of-charge
    // warming between the two is what dT/dt termination is for, so it is only a warning.
    tempCutoffC: p.chemistry === 'nimh' ? Math.max(p.tempWindowC[1], NIMH_CUTOFF_C) : p.tempWindowC[1],
    // 1 °C hysteresis on the temperature window (common practice for NTC limits).
    tempHysteresisC: 1,
    inputSetpointV: p.inputSetpointV,
    // An MPPT input holds its set point to about ±1 %; 3 % above counts as recovered (common practice).
    inputAtFraction: 0.01,
    inputClearFraction: 0.03,
    // A phase must be seen for 5 s of sample time before it is entered (filters noise, passing clouds).
    phaseDebounceS: 5,
    stallS: p.stallMin * 60,
    // Progress = 10 mV/cell of filtered voltage, or 0.2 % of capacity delivered (both well above noise).
    stallRiseVPerCell: 0.01,
    stallRiseAh: 0.002 * c,
    silenceS: p.silenceS,
    preconditionTimeoutS: p.preconditionTimeoutMin * 60,
    timerS: p.timerMin === null ? null : p.timerMin * 60,
    minusDeltaVPerCell: p.minusDeltaVPerCell,
    dTdtCPerMin: p.dTdtCPerMin,
    // −ΔV is masked for an initial delay of up to ~10 min: Panasonic NiMH charge methods (published).
    nimhMaskS: 600,
    irStepA: resistanceStepA(p),
    irMaxDtS: 5,
  };
}

/**
 * Lead-acid set points move with temperature around 25 °C (BU-403, published); others do not.
 * The overvoltage limit moves with them, so a correctly compensated cold bank is not flagged.
 */
export function compensate(lim: EngineLimits, vPerCell: number, tempC: number): number {
  if (lim.tempCompVPerCPerCell === null || tempC !== tempC) return vPerCell;
  return vPerCell + lim.tempCompVPerCPerCell * (tempC - 25);
}
