/**
 * Losses of the charger's switching converter: a fixed quiescent draw, switching losses
 * proportional to the power handled and conduction losses in I^2 R. With the demo values
 * below the efficiency is about 85-93 % over a charge, the usual range of small buck
 * chargers (common practice).
 */
export interface ConverterParams {
  quiescentW: number;
  switchingFraction: number;
  conductionOhm: number;
}

export const DEFAULT_CONVERTER: ConverterParams = {
  quiescentW: 0.04,
  switchingFraction: 0.06,
  conductionOhm: 0.12,
};

/** Power lost in the converter while it delivers `outW` at `outA`. */
export function converterLossW(p: ConverterParams, outW: number, outA: number): number {
  if (outW <= 0) return p.quiescentW;
  return p.quiescentW + p.switchingFraction * outW + p.conductionOhm * outA * outA;
}

/** Power the converter draws from its source while delivering `outW` at `outA`. */
export function converterInputW(p: ConverterParams, outW: number, outA: number): number {
  return Math.max(0, outW) + converterLossW(p, outW, outA);
}
