/**
 * The charge phase from voltage, current, source and the charger's status pins.
 *
 * `classify` says which phase one sample looks like, given the phase the pack is in (so each
 * boundary has hysteresis); `update` only enters a new phase after it has been seen for
 * `phaseDebounceS` of sample time, so noise and a passing cloud do not flicker the phase.
 * `fault` is not decided here: the engine overlays it at once from the fault pin and the
 * critical alarms that stop a charge.
 */
import { compensate as compensateImport, type EngineLimits } from './limits';
import { NimhTermination } from './nimh-termination';
import {
  CC as CC_CODE,
  CV as CV_CODE,
  DONE as DONE_CODE,
  IDLE as IDLE_CODE,
  NO_PHASE as NO_PHASE_CODE,
  PRECONDITION as PRECONDITION_CODE,
  isChargingCode as isChargingCodeImport,
} from './phase-codes';
import type { SampleView } from './sample-view';
import { PHASES, type Phase } from './types';

// Module-local copies: an imported binding is read through a getter under CommonJS interop.
const compensate = compensateImport;
const PRECONDITION = PRECONDITION_CODE;
const CC = CC_CODE;
const CV = CV_CODE;
const DONE = DONE_CODE;
const IDLE = IDLE_CODE;
const NO_PHASE = NO_PHASE_CODE;
const isChargingCode = isChargingCodeImport;

/** In CV the current has left the set current by this fraction (noise on the set current stays CC). */
const CV_CURRENT_FRACTION = 0.95;

export type UnderlyingPhase = Exclude<Phase, 'fault'>;

export function isChargingPhase(phase: Phase): boolean {
  return phase === 'precondition' || phase === 'cc' || phase === 'cv';
}

/**
 * Works on phase codes (phase-codes.ts) so the per-sample path compares small integers;
 * `phase` gives the name.
 */
export class PhaseMachine {
  /** The phase the pack is in, as a code. */
  code = IDLE;
  sinceT = 0;
  readonly nimh: NimhTermination;
  private started = false;
  private pending = IDLE;
  private pendingSinceT = NaN;
  /** Lead-acid: absorption (cv) was reached in this charge, so float may follow. */
  private absorbed = false;
  /** The last charge current that counted as flowing: tells a finished taper from a dropout. */
  private lastFlowingA = Infinity;

  constructor(private readonly lim: EngineLimits) {
    this.nimh = new NimhTermination(lim);
  }

  get phase(): UnderlyingPhase {
    return PHASES[this.code] as UnderlyingPhase;
  }

  /** The phase (code) this one sample points to, from the present phase. */
  classify(v: SampleView): number {
    const lim = this.lim;
    const prev = this.code;
    const currentA = v.ibatA;
    const vPerCell = v.vPerCell;
    if (currentA !== currentA) return this.classifyFromPins(v, prev);
    const charging = isChargingCode(prev);
    // The charger's own "charging" output lowers the bar: a trickle it says it is delivering counts.
    const flowing = currentA >= (charging || v.chg === 1 ? lim.flowOffA : lim.flowOnA);

    if (!flowing) {
      if (v.sourceAbsent()) return IDLE;
      if (prev === DONE) return DONE;
      // The charger says it is charging but nothing flows (a contact dropout): hold the phase;
      // stall watches a hold that lasts.
      if (charging && v.chg === 1) return prev;
      if (prev === CV) {
        // The taper ended (the current had come down near termination), or the current collapsed
        // mid-taper, which is an interruption, not a full pack.
        return this.lastFlowingA <= lim.resumeA ? DONE : IDLE;
      }
      if (lim.isNimh && prev === CC) {
        if (this.nimh.ended !== null) return DONE;
        // The charger deasserted "charging" after reaching a full-charge voltage.
        if (v.chg === 0 && vPerCell >= lim.regulationVPerCell) return DONE;
      }
      return IDLE;
    }

    if (prev === DONE && currentA < lim.resumeA) return DONE;
    const preV = prev === PRECONDITION ? lim.preconditionExitVPerCell : lim.preconditionVPerCell;
    if (lim.isNimh) {
      if (this.nimh.ended !== null) return DONE;
      if (vPerCell < preV && currentA <= lim.preconditionMaxA) return PRECONDITION;
      return CC;
    }
    if (vPerCell < preV && currentA <= lim.preconditionMaxA) return PRECONDITION;

    const tempC = v.tempC;
    if (lim.isLeadAcid && lim.floatVPerCell !== null) {
      const floatV = compensate(lim, lim.floatVPerCell, tempC);
      const band = floatV * lim.floatBandFraction;
      // Float (= done) comes after absorption (three-stage charge: bulk, absorption, float;
      // BU-403): held at the float voltage with the current down at termination once absorption
      // was reached, or when the charger itself says it is not charging (it floats). A bank still
      // rising through the float band under a weak source's small bulk current is not done.
      if (
        (this.absorbed || v.chg === 0) &&
        vPerCell <= floatV + band &&
        vPerCell >= floatV - band &&
        currentA <= lim.terminationA
      )
        return DONE;
      if ((prev === CV || prev === DONE) && vPerCell <= floatV + band && currentA < lim.resumeA) return DONE;
    }
    const regV = compensate(lim, lim.regulationVPerCell, tempC);
    const band = prev === CV || prev === DONE ? lim.cvExitFraction : lim.cvEnterFraction;
    if (vPerCell >= regV * (1 - band)) {
      if (currentA <= lim.terminationA) return DONE;
      if (prev === CV || currentA < lim.setA * CV_CURRENT_FRACTION) return CV;
    }
    // Below regulation: CC, also when a weak source holds the current under the set current.
    return CC;
  }

  /** No current reported: the charger's "charging" pin and the voltage are all there is. */
  private classifyFromPins(v: SampleView, prev: number): number {
    const lim = this.lim;
    if (v.chg === 0) return prev === CV || prev === DONE ? DONE : IDLE;
    if (v.chg !== 1) return prev; // neither current nor pin: nothing to decide from
    const vPerCell = v.vPerCell;
    if (vPerCell < lim.preconditionVPerCell) return PRECONDITION;
    const regV = compensate(lim, lim.regulationVPerCell, v.tempC);
    if (lim.hasCv && vPerCell >= regV * (1 - (prev === CV ? lim.cvExitFraction : lim.cvEnterFraction)))
      return CV;
    return CC;
  }

  /** Feed one sample. Returns the code of the phase just entered, or NO_PHASE. */
  update(v: SampleView): number {
    const lim = this.lim;
    if (lim.isNimh && this.code === CC && v.ibatA >= lim.flowOffA) this.nimh.update(v.t, v.vPerCell, v.tempC);
    const candidate = this.classify(v);
    if (v.ibatA >= lim.flowOffA) this.lastFlowingA = v.ibatA;
    if (!this.started) {
      this.started = true;
      this.enter(candidate, v.t);
      return candidate;
    }
    if (candidate === this.code) {
      this.pendingSinceT = NaN;
      return NO_PHASE;
    }
    if (candidate !== this.pending || this.pendingSinceT !== this.pendingSinceT) {
      this.pending = candidate;
      this.pendingSinceT = v.t;
    }
    if (v.t - this.pendingSinceT >= lim.phaseDebounceS) {
      this.enter(candidate, v.t);
      return candidate;
    }
    return NO_PHASE;
  }

  private enter(code: number, t: number): void {
    this.code = code;
    this.sinceT = t;
    this.pendingSinceT = NaN;
    // A new charge episode starts from idle: −ΔV detection re-arms, and lead-acid must go
    // through absorption again before float.
    if (code === IDLE) {
      this.nimh.reset();
      this.absorbed = false;
    }
    if (code === CV) this.absorbed = true;
  }
}
