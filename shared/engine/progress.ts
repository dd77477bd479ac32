/**
 * Stall detection: has the charge made progress? Progress is a rise of the filtered pack
 * voltage or of the delivered charge beyond a threshold, so sensor noise does not count.
 */

/** Voltage filter time constant for progress (common practice: a minute averages ADC noise). */
const V_FILTER_TAU_S = 60;

export class ProgressTracker {
  private vFilt = NaN;
  private lastT = NaN;
  private refT = NaN;
  private refV = NaN;
  private refAh = 0;
  /** Seconds since the last progress while current should flow, else 0 (set by update). */
  stalledS = 0;

  constructor(
    private readonly riseVPerCell: number,
    private readonly riseAh: number,
  ) {}

  /** Forget the reference (the charge stopped, or telemetry was interrupted). */
  restart(): void {
    this.refT = NaN;
  }

  /** Feed one sample; updates stalledS. */
  update(t: number, vPerCell: number, ah: number, shouldFlow: boolean): void {
    if (vPerCell === vPerCell) {
      if (this.vFilt !== this.vFilt || !(t > this.lastT)) this.vFilt = vPerCell;
      else {
        const dt = t - this.lastT;
        this.vFilt += (vPerCell - this.vFilt) * (dt / (V_FILTER_TAU_S + dt));
      }
      this.lastT = t;
    }
    this.stalledS = 0;
    if (!shouldFlow) {
      this.refT = NaN;
      return;
    }
    if (this.refT !== this.refT) {
      this.refT = t;
      this.refV = this.vFilt;
      this.refAh = ah;
      return;
    }
    const rose = this.vFilt >= this.refV + this.riseVPerCell || ah >= this.refAh + this.riseAh;
    if (rose) {
      this.refT = t;
      this.refV = this.vFilt;
      this.refAh = ah;
      return;
    }
    // A falling voltage moves the reference down: a later rise is measured from the low point.
    if (this.vFilt < this.refV || this.refV !== this.refV) this.refV = this.vFilt;
    this.stalledS = t - this.refT;
  }

  /** The filtered voltage per cell, for messages. */
  filteredVPerCell(): number {
    return this.vFilt;
  }

  /** Charge delivered since the last progress (for messages). */
  ahSinceProgress(ah: number): number {
    return ah - this.refAh;
  }
}
