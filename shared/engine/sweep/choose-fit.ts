/**
 * The physical model where the points support it, else the smooth fit: the single-diode curve
 * is kept unless its residual is clearly worse than a free smooth curve's (then the points do
 * not follow one diode curve: shading, two panels, a source that is no panel).
 */
import { fitSingleDiode } from './fit-diode';
import { fitSmooth } from './fit-smooth';
import type { FittedCurve, SweepPoint } from './types';

/** How much worse than the smooth fit the diode fit may be and still be used (project choice). */
const DIODE_RMS_ALLOWANCE = 1.5;

export function chooseFit(points: readonly SweepPoint[]): FittedCurve | null {
  const smooth = fitSmooth(points);
  const diode = fitSingleDiode(points);
  if (diode && (!smooth || diode.rmsW <= DIODE_RMS_ALLOWANCE * smooth.rmsW + 1e-3)) return diode;
  return smooth;
}
