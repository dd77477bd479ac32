/**
 * Phases as small integers for the per-sample path: each code is the phase's index in PHASES,
 * so PHASES[code] is its name at the edges (events, state). The charging phases come first,
 * so "is charging" is one comparison.
 */
export const PRECONDITION = 0;
export const CC = 1;
export const CV = 2;
export const DONE = 3;
export const FAULT = 4;
export const IDLE = 5;
/** No phase (nothing entered). */
export const NO_PHASE = -1;

/** Precondition, CC or CV. */
export function isChargingCode(code: number): boolean {
  return code >= PRECONDITION && code <= CV;
}
