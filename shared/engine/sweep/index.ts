/** Source sweep: the maximum power point of a solar source from a swept set point. */
export { analyseSweep, analyseWindow, type SweepOptions, type SweepReport } from './analyse';
export { adviceFor, type Advice } from './advice';
export { mpptEfficiency, dayEfficiency, type DayEfficiency } from './efficiency';
export { findMaximum } from './maximum';
export { fitSingleDiode, type DiodeFit } from './fit-diode';
export { fitSmooth, type SmoothFit } from './fit-smooth';
export { lambertW, lambertWOfExp } from './lambert-w';
export {
  diodeCurrentA,
  diodePowerW,
  diodeMaxPower,
  diodeOpenCircuitV,
  modifiedIdealityV,
  thermalVoltageV,
  type DiodeParams,
} from './single-diode';
export { checkSteadiness, STEADY_TOLERANCE } from './steadiness';
export { pointsFromSamples } from './points';
export { findSweepWindows } from './windows';
export type { SweepPoint, FittedCurve, MaximumPowerPoint } from './types';
