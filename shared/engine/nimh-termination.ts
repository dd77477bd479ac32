/**
 * NiMH end of charge: −ΔV (the pack voltage falls a few mV per cell past its peak) or dT/dt
 * (the temperature rises fast once the cells are full). Both are masked at the start of CC,
 * when a deeply discharged pack can show a voltage dip of its own (Panasonic NiMH charge
 * methods, published).
 */
import type { EngineLimits } from './limits';

/** Voltage filter time constant: averages ADC noise well below the 5 mV/cell −ΔV step (common practice). */
const V_FILTER_TAU_S = 30;
/** Temperature filter: an NTC read by an ADC jitters by tenths of a degree (common practice). */
const T_FILTER_TAU_S = 20;
/** dT/dt is measured over two minutes, so residual jitter stays well under 1 °C/min (common practice). */
const DTDT_WINDOW_S = 120;

export type NimhEnd = 'minus-delta-v' | 'dtdt' | null;

export class NimhTermination {
  private ccSinceT = NaN;
  private vFilt = NaN;
  private lastT = NaN;
  private tempFilt = NaN;
  private lastTempT = NaN;
  private peakV = -Infinity;
  private tempRefT = NaN;
  private tempRefC = NaN;
  /** Why the charge ended, once it has. */
  ended: NimhEnd = null;
  /** The figures that ended it, for the message. */
  dropVPerCell = 0;
  rateCPerMin = 0;

  constructor(private readonly lim: EngineLimits) {}

  reset(): void {
    this.ccSinceT = NaN;
    this.vFilt = NaN;
    this.lastT = NaN;
    this.tempFilt = NaN;
    this.lastTempT = NaN;
    this.peakV = -Infinity;
    this.tempRefT = NaN;
    this.tempRefC = NaN;
    this.ended = null;
  }

  /** Feed one sample taken while the pack is in CC. Returns true when the charge just ended. */
  update(t: number, vPerCell: number, tempC: number): boolean {
    if (this.ended !== null) return false;
    if (this.ccSinceT !== this.ccSinceT) this.ccSinceT = t;
    if (vPerCell === vPerCell) {
      if (this.vFilt !== this.vFilt) this.vFilt = vPerCell;
      else {
        const dt = t - this.lastT;
        this.vFilt += (vPerCell - this.vFilt) * (dt / (V_FILTER_TAU_S + dt));
      }
      this.lastT = t;
    }
    if (tempC === tempC) {
      if (this.tempFilt !== this.tempFilt) this.tempFilt = tempC;
      else {
        const dt = t - this.lastTempT;
        this.tempFilt += (tempC - this.tempFilt) * (dt / (T_FILTER_TAU_S + dt));
      }
      this.lastTempT = t;
    }
    if (t - this.ccSinceT < this.lim.nimhMaskS) {
      this.tempRefT = NaN;
      this.peakV = -Infinity;
      return false;
    }
    if (this.vFilt > this.peakV) this.peakV = this.vFilt;
    const dv = this.lim.minusDeltaVPerCell;
    if (dv !== null && this.peakV - this.vFilt >= dv) {
      this.ended = 'minus-delta-v';
      this.dropVPerCell = this.peakV - this.vFilt;
      return true;
    }
    const rate = this.lim.dTdtCPerMin;
    const filtC = this.tempFilt;
    if (rate !== null && tempC === tempC) {
      if (this.tempRefT !== this.tempRefT) {
        this.tempRefT = t;
        this.tempRefC = filtC;
      } else if (t - this.tempRefT >= DTDT_WINDOW_S) {
        const perMin = ((filtC - this.tempRefC) * 60) / (t - this.tempRefT);
        this.tempRefT = t;
        this.tempRefC = filtC;
        if (perMin >= rate) {
          this.ended = 'dtdt';
          this.rateCPerMin = perMin;
          return true;
        }
      }
    }
    return false;
  }
}
