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
import type { SampleView } from './sample-view';
import type { Phase } from './types';

// Module-local copy: an imported binding is read through a getter under CommonJS interop.
const compensate = compensateImport;

/** In CV the current has left the set current by this fraction (noise on the set current stays CC). */
const CV_CURRENT_FRACTION = 0.95;

export type UnderlyingPhase = Exclude<Phase, 'fault'>;

export function isChargingPhase(phase: Phase): boolean {
  return phase === 'precondition' || phase === 'cc' || phase === 'cv';
}

export class PhaseMachine {
  phase: UnderlyingPhase = 'idle';
  sinceT = 0;
  readonly nimh: NimhTermination;
  private started = false;
  private pending: UnderlyingPhase = 'idle';
  private pendingSinceT = NaN;
  /** Lead-acid: absorption (cv) was reached in this charge, so float may follow. */
  private absorbed = false;
  /** The last charge current that counted as flowing: tells a finished taper from a dropout. */
  private lastFlowingA = Infinity;

  constructor(private readonly lim: EngineLimits) {
    this.nimh = new NimhTermination(lim);
  }

  /** The phase this one sample points to, from the present phase. */
  classify(v: SampleView): UnderlyingPhase {
    const lim = this.lim;
    const prev = this.phase;
    const currentA = v.ibatA;
    const vPerCell = v.vPerCell;
    if (currentA !== currentA) return this.classifyFromPins(v, prev);
    const charging = isChargingPhase(prev);
    // The charger's own "charging" output lowers the bar: a trickle it says it is delivering counts.
    const flowing = currentA >= (charging || v.chg === 1 ? lim.flowOffA : lim.flowOnA);

    if (!flowing) {
      if (v.sourceAbsent()) return 'idle';
      if (prev === 'done') return 'done';
      // The charger says it is charging but nothing flows (a contact dropout): hold the phase;
      // stall watches a hold that lasts.
      if (charging && v.chg === 1) return prev;
      if (prev === 'cv') {
        // The taper ended (the current had come down near termination), or the current collapsed
        // mid-taper, which is an interruption, not a full pack.
        return this.lastFlowingA <= lim.resumeA ? 'done' : 'idle';
      }
      if (lim.isNimh && prev === 'cc') {
        if (this.nimh.ended !== null) return 'done';
        // The charger deasserted "charging" after reaching a full-charge voltage.
        if (v.chg === 0 && vPerCell >= lim.regulationVPerCell) return 'done';
      }
      return 'idle';
    }

    if (prev === 'done' && currentA < lim.resumeA) return 'done';
    const preV = prev === 'precondition' ? lim.preconditionExitVPerCell : lim.preconditionVPerCell;
    if (lim.isNimh) {
      if (this.nimh.ended !== null) return 'done';
      if (vPerCell < preV && currentA <= lim.preconditionMaxA) return 'precondition';
      return 'cc';
    }
    if (vPerCell < preV && currentA <= lim.preconditionMaxA) return 'precondition';

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
        return 'done';
      if ((prev === 'cv' || prev === 'done') && vPerCell <= floatV + band && currentA < lim.resumeA)
        return 'done';
    }
    const regV = compensate(lim, lim.regulationVPerCell, tempC);
    const band = prev === 'cv' || prev === 'done' ? lim.cvExitFraction : lim.cvEnterFraction;
    if (vPerCell >= regV * (1 - band)) {
      if (currentA <= lim.terminationA) return 'done';
      if (prev === 'cv' || currentA < lim.setA * CV_CURRENT_FRACTION) return 'cv';
    }
    // Below regulation: CC, also when a weak source holds the current under the set current.
    return 'cc';
  }

  /** No current reported: the charger's "charging" pin and the voltage are all there is. */
  private classifyFromPins(v: SampleView, prev: UnderlyingPhase): UnderlyingPhase {
    const lim = this.lim;
    if (v.chg === 0) return prev === 'cv' || prev === 'done' ? 'done' : 'idle';
    if (v.chg !== 1) return prev; // neither current nor pin: nothing to decide from
    const vPerCell = v.vPerCell;
    if (vPerCell < lim.preconditionVPerCell) return 'precondition';
    const regV = compensate(lim, lim.regulationVPerCell, v.tempC);
    if (lim.hasCv && vPerCell >= regV * (1 - (prev === 'cv' ? lim.cvExitFraction : lim.cvEnterFraction)))
      return 'cv';
    return 'cc';
  }

  /** Feed one sample. Returns the phase just entered, or null. */
  update(v: SampleView): UnderlyingPhase | null {
    const lim = this.lim;
    if (lim.isNimh && this.phase === 'cc' && v.ibatA >= lim.flowOffA)
      this.nimh.update(v.t, v.vPerCell, v.tempC);
    const candidate = this.classify(v);
    if (v.ibatA >= lim.flowOffA) this.lastFlowingA = v.ibatA;
    if (!this.started) {
      this.started = true;
      this.enter(candidate, v.t);
      return candidate;
    }
    if (candidate === this.phase) {
      this.pendingSinceT = NaN;
      return null;
    }
    if (candidate !== this.pending || this.pendingSinceT !== this.pendingSinceT) {
      this.pending = candidate;
      this.pendingSinceT = v.t;
    }
    if (v.t - this.pendingSinceT >= lim.phaseDebounceS) {
      this.enter(candidate, v.t);
      return candidate;
    }
    return null;
  }

  private enter(phase: UnderlyingPhase, t: number): void {
    this.phase = phase;
    this.sinceT = t;
    this.pendingSinceT = NaN;
    // A new charge episode starts from idle: −ΔV detection re-arms, and lead-acid must go
    // through absorption again before float.
    if (phase === 'idle') {
      this.nimh.reset();
      this.absorbed = false;
    }
    if (phase === 'cv') this.absorbed = true;
  }
}
