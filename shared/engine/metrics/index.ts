/** Run metrics: charge and energy, SoC, time to full, internal resistance, MPPT tracking. */
export { EnergyCounter } from './energy';
export { StepResistance } from './resistance';
export { MpptTracking } from './mppt';
export { TaperModel } from './taper';
export { SocEstimator } from './soc';
