/**
 * Time to full. CV taper: the current decays roughly exponentially toward the termination
 * current, I(t) = I0·e^(−t/τ) (common practice model), so the taper ends after
 * τ·ln(I/I_term) and still delivers (I − I_term)·τ. τ is learned from the decay seen so far.
 * CC part: remaining Ah / current (common practice).
 */

/** Current filter: averages noise before taking logarithms (common practice). */
const I_FILTER_TAU_S = 10;
/** The decay is measured over at least a minute, and re-anchored every 15 min to follow the curve. */
const MIN_SPAN_S = 60;
const REANCHOR_S = 900;

export class TaperModel {
  private iFilt = NaN;
  private lastT = NaN;
  private refT = NaN;
  private refA = NaN;
  /**
   * The last decay measured: from fromA to toA over spanS. The rate is worked out from them
   * only when asked (a logarithm on every CV sample otherwise).
   */
  private decayFromA = NaN;
  private decayToA = NaN;
  private decaySpanS = NaN;

  /** Learned decay rate 1/τ, per second; NaN until seen. Kept after CV ends for later estimates. */
  get ratePerS(): number {
    return Math.log(this.decayFromA / this.decayToA) / this.decaySpanS;
  }

  /** Feed the charge current; inCv says whether the pack is in its CV stage. */
  update(t: number, currentA: number, inCv: boolean): void {
    if (currentA !== currentA) return;
    if (this.iFilt !== this.iFilt || !(t > this.lastT)) this.iFilt = currentA;
    else {
      const dt = t - this.lastT;
      this.iFilt += (currentA - this.iFilt) * (dt / (I_FILTER_TAU_S + dt));
    }
    this.lastT = t;
    if (!inCv || !(this.iFilt > 0)) {
      this.refT = NaN;
      return;
    }
    if (this.refT !== this.refT) {
      this.refT = t;
      this.refA = this.iFilt;
      return;
    }
    const span = t - this.refT;
    if (span >= MIN_SPAN_S && this.iFilt < this.refA) {
      this.decayFromA = this.refA;
      this.decayToA = this.iFilt;
      this.decaySpanS = span;
      if (span >= REANCHOR_S) {
        this.refT = t;
        this.refA = this.iFilt;
      }
    }
  }

  /** Filtered current, A. */
  currentA(): number {
    return this.iFilt;
  }

  /** Seconds for the taper to fall from fromA to terminationA, or NaN. */
  taperS(fromA: number, terminationA: number): number {
    const rate = this.ratePerS;
    if (!(rate > 0)) return NaN;
    if (fromA <= terminationA) return 0;
    return Math.log(fromA / terminationA) / rate;
  }

  /** Ah the taper still delivers from fromA down to terminationA, or NaN. */
  taperAh(fromA: number, terminationA: number): number {
    const rate = this.ratePerS;
    if (!(rate > 0)) return NaN;
    if (fromA <= terminationA) return 0;
    return (fromA - terminationA) / rate / 3600;
  }
}
