/** Public API of the run engine (pipeline and diagnosis are exported by their owners). */
export * from './types';
export { createRunEngine } from './run-engine';
export { deriveLimits, compensate, type EngineLimits } from './limits';
export { ALARM_RULES } from './alarms';
export { PhaseMachine, isChargingPhase, type UnderlyingPhase } from './phase-machine';
export { EnergyCounter, MpptTracking, SocEstimator, StepResistance, TaperModel } from './metrics';
