/**
 * Intermittent contact between charger and pack, seen sample by sample: the one detector
 * behind both the live `contact` alarm and the diagnosis `connection` cause, so both count
 * the same evidence.
 *
 * - A voltage step: the pack voltage moves by more than 50 mV per cell between neighbouring
 *   samples while the current stays put (a contact's resistance changed; the charge did not).
 * - An opening: the current falls from flowing to nothing in one step and comes back within
 *   a minute while a source is present (the contact opened and closed again).
 */
import type { ResolvedProfile } from '../chemistry/types';

export interface ContactLimits {
  /** Pack-voltage step between neighbours that counts, V (50 mV per cell). */
  stepV: number;
  /** The current counts as unchanged within this, A. */
  steadyA: number;
  /** Current that counts as flowing before and after an opening, A. */
  flowingA: number;
  /** Current that counts as nothing during an opening, A. */
  zeroA: number;
  /** An opening longer than this is a stop, not a bounce, s. */
  maxOpenS: number;
}

/**
 * Thresholds from the profile. 50 mV per cell is well above ADC noise and well below a phase
 * change's step; 30 % / 2 % of the charge current tell flowing from nothing (common practice).
 */
export function contactLimits(p: ResolvedProfile): ContactLimits {
  return {
    stepV: 0.05 * p.cells,
    steadyA: Math.max(0.02, 0.05 * p.chargeCurrentA),
    flowingA: 0.3 * p.chargeCurrentA,
    zeroA: Math.max(0.005, 0.02 * p.chargeCurrentA),
    maxOpenS: 60,
  };
}

/** What `feed` saw. */
export const CONTACT_NONE = 0;
export const CONTACT_STEP = 1;
export const CONTACT_OPENING = 2;

export class ContactWatch {
  private prevT = NaN;
  private prevV = NaN;
  private prevA = NaN;
  private openFromT = NaN;
  private vBefore = 0;
  private vMax = 0;
  /** For a step: its size (V). For an opening: its start, its length and whether the voltage rose. */
  stepDv = 0;
  openingT = 0;
  openingS = 0;
  openingRose = false;

  constructor(private readonly lim: ContactLimits) {}

  /** Forget the last sample (telemetry was interrupted). */
  reset(): void {
    this.prevT = NaN;
    this.openFromT = NaN;
  }

  /**
   * One sample (NaN = not reported). `maxDtS`: neighbours further apart than this are not
   * compared. `sourceAbsent`: the source is known to be gone (a fading panel, not a contact).
   */
  feed(t: number, vbatV: number, ibatA: number, maxDtS: number, sourceAbsent: boolean): number {
    const lim = this.lim;
    const pt = this.prevT;
    const pv = this.prevV;
    const pa = this.prevA;
    if (ibatA !== ibatA) return CONTACT_NONE; // no current: nothing to compare, keep the last one
    this.prevT = t;
    this.prevA = ibatA;
    this.prevV = vbatV;
    if (pt !== pt || pa !== pa) return CONTACT_NONE;
    let seen = CONTACT_NONE;
    const dt = t - pt;
    if (vbatV === vbatV && pv === pv && dt > 0 && dt <= maxDtS) {
      const dV = vbatV - pv;
      if ((dV >= lim.stepV || dV <= -lim.stepV) && Math.abs(ibatA - pa) <= lim.steadyA) {
        this.stepDv = dV;
        seen = CONTACT_STEP;
      }
    }
    if (this.openFromT !== this.openFromT) {
      if (pa >= lim.flowingA && ibatA <= lim.zeroA && !sourceAbsent) {
        this.openFromT = t;
        this.vBefore = pv === pv ? pv : 0;
        this.vMax = vbatV === vbatV ? vbatV : 0;
      }
    } else if (sourceAbsent) {
      this.openFromT = NaN; // the source went: not a contact
    } else if (ibatA <= lim.zeroA) {
      if (vbatV > this.vMax) this.vMax = vbatV;
      if (t - this.openFromT > lim.maxOpenS) this.openFromT = NaN; // a long stop is a phase change
    } else if (ibatA >= lim.flowingA) {
      this.openingT = this.openFromT;
      this.openingS = t - this.openFromT;
      this.openingRose = this.vMax > this.vBefore;
      this.openFromT = NaN;
      seen = CONTACT_OPENING;
    } else {
      this.openFromT = NaN;
    }
    return seen;
  }
}
