/** Types of the source sweep: P–V points, fitted curves and what the analysis reports. */

/** One sample of the source: run time, voltage, current and their product. */
export interface SweepPoint {
  tS: number;
  vV: number;
  iA: number;
  pW: number;
}

/** A curve fitted through P–V points; `powerW` is only trusted on [vMinV, vMaxV]. */
export interface FittedCurve {
  model: 'single-diode' | 'smooth';
  powerW(vV: number): number;
  /** Voltage span the fit rests on (the swept range, without lone outliers). */
  vMinV: number;
  vMaxV: number;
  points: number;
  /** Root mean square of measured minus fitted power over the points, watts. */
  rmsW: number;
}

/** Where the fitted curve peaks inside the swept range. */
export interface MaximumPowerPoint {
  vV: number;
  pW: number;
}
