/**
 * NiMH end of charge: −ΔV (the pack voltage falls a few mV per cell past its peak) or dT/dt
 * (the temperature rises fast once the cells are full). Both are masked at the start of CC,
 * when a deeply discharged pack can show a voltage dip of its own (Panasonic NiMH charge
 * methods, published).
 */
import type { EngineLimits } from './limits';

/** Voltage filter time constant: averages ADC noise well below the 5 mV/cell −ΔV step (common practice). */
const V_FILTER_TAU_S = 30;
/**
 * The drop must also stand out of the filtered noise by this many standard deviations. The
 * largest peak-to-trough swing of filtered noise over a charge of a few hours is about 6 σ
 * (some 150 independent filter windows: 2·√(2 ln 150) ≈ 6.3); 8 σ leaves a margin, so at any
 * sample rate −ΔV never ends a charge on noise alone (measured in tests/unit/engine-nimh-noise.test.ts).
 */
const NOISE_SIGMAS = 8;
/** Weight of each new sample in the running noise estimate (about the last 64 samples). */
const NOISE_WEIGHT = 1 / 64;
/** E|x1 − x2| = 2σ/√π for independent normal noise of σ: σ = mean |difference| · √π / 2. */
const SIGMA_PER_ABS_DIFF = Math.sqrt(Math.PI) / 2;
/** Temperature filter: an NTC read by an ADC jitters by tenths of a degree (common practice). */
const T_FILTER_TAU_S = 20;
/** dT/dt is measured over two minutes, so residual jitter stays well under 1 °C/min (common practice). */
const DTDT_WINDOW_S = 120;

export type NimhEnd = 'minus-delta-v' | 'dtdt' | null;

export class NimhTermination {
  private ccSinceT = NaN;
  private vFilt = NaN;
  private lastT = NaN;
  private lastRawV = NaN;
  /** Running mean of |v − previous v| and of the sample interval: the noise the filter sees. */
  private absDiffV = NaN;
  private meanDtS = NaN;
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
    this.lastRawV = NaN;
    this.absDiffV = NaN;
    this.meanDtS = NaN;
    this.tempFilt = NaN;
    this.lastTempT = NaN;
    this.peakV = -Infinity;
    this.tempRefT = NaN;
    this.tempRefC = NaN;
    this.ended = null;
  }

  /**
   * NOISE_SIGMAS standard deviations of the filtered voltage: the raw noise (from successive
   * differences) through the filter, whose output variance is α/(2 − α) of its input's for
   * white noise (first-order low-pass, α = dt/(τ + dt)).
   */
  noiseFloorV(): number {
    if (this.absDiffV !== this.absDiffV) return 0;
    const sigmaV = this.absDiffV * SIGMA_PER_ABS_DIFF;
    const a = this.meanDtS / (V_FILTER_TAU_S + this.meanDtS);
    return NOISE_SIGMAS * sigmaV * Math.sqrt(a / (2 - a));
  }

  /** Feed one sample taken while the pack is in CC. Returns true when the charge just ended. */
  update(t: number, vPerCell: number, tempC: number): boolean {
    if (this.ended !== null) return false;
    if (this.ccSinceT !== this.ccSinceT) this.ccSinceT = t;
    if (vPerCell === vPerCell) {
      if (this.vFilt !== this.vFilt) this.vFilt = vPerCell;
      else {
        const dt = t - this.lastT;
        if (dt > 0) {
          this.vFilt += (vPerCell - this.vFilt) * (dt / (V_FILTER_TAU_S + dt));
          const d = Math.abs(vPerCell - this.lastRawV);
          if (this.absDiffV !== this.absDiffV) {
            this.absDiffV = d;
            this.meanDtS = dt;
          } else {
            this.absDiffV += (d - this.absDiffV) * NOISE_WEIGHT;
            this.meanDtS += (dt - this.meanDtS) * NOISE_WEIGHT;
          }
        }
      }
      this.lastRawV = vPerCell;
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
    if (dv !== null && this.peakV - this.vFilt >= dv && this.peakV - this.vFilt >= this.noiseFloorV()) {
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
