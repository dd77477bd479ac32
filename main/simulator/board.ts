/**
 * The parts of a charger board that fix its design values, so a board out of spec is made the
 * way it is on a real bench: by a part of the wrong value, not by a changed setting.
 *
 * - Charge current: the current loop holds the voltage across the sense resistor at its
 *   threshold, so I = V_sense / R_sense (a resistor 20 % low gives 1/0.8 = 1.25 x the current).
 * - Regulation voltage: the voltage loop holds the feedback node at the reference, so
 *   V = V_ref x (1 + R_top / R_bottom).
 * - Safety timer: an RC oscillator counts a fixed number of periods, so the time is
 *   proportional to the timing capacitor.
 * The nominal part values are invented for the demo board (a garden-sensor charger board).
 */
import type { ChargerSettings } from './charger';

export interface BoardParts {
  senseOhm: number;
  dividerTopOhm: number;
  dividerBottomOhm: number;
  timingCapF: number;
}

/** The demo board's fixed electrical constants (invented). */
export const BOARD_CONSTANTS = {
  /** Current-sense threshold across R_sense. */
  senseThresholdV: 0.1,
  /** Feedback reference voltage. */
  referenceV: 1.2,
  /** Seconds of safety timer per farad of timing capacitor (240 min at 100 nF). */
  timerSPerF: (240 * 60) / 100e-9,
};

/** Nominal parts for a design: current, pack regulation voltage and timer. */
export function nominalParts(design: {
  chargeCurrentA: number;
  regulationV: number;
  timerMin: number;
}): BoardParts {
  const dividerBottomOhm = 100_000;
  return {
    senseOhm: BOARD_CONSTANTS.senseThresholdV / design.chargeCurrentA,
    dividerBottomOhm,
    dividerTopOhm: dividerBottomOhm * (design.regulationV / BOARD_CONSTANTS.referenceV - 1),
    timingCapF: (design.timerMin * 60) / BOARD_CONSTANTS.timerSPerF,
  };
}

/** What a board with these parts actually does: the model's truth, for tests and the batch table. */
export interface BoardTruth {
  chargeCurrentA: number;
  regulationV: number;
  timerMin: number;
}

export function boardTruth(parts: BoardParts): BoardTruth {
  return {
    chargeCurrentA: BOARD_CONSTANTS.senseThresholdV / parts.senseOhm,
    regulationV: BOARD_CONSTANTS.referenceV * (1 + parts.dividerTopOhm / parts.dividerBottomOhm),
    timerMin: (parts.timingCapF * BOARD_CONSTANTS.timerSPerF) / 60,
  };
}

/** The charger's settings on this board: the firmware's thresholds, the parts' values. */
export function withBoardParts(settings: ChargerSettings, parts: BoardParts): ChargerSettings {
  const truth = boardTruth(parts);
  const timerS = truth.timerMin * 60;
  return {
    ...settings,
    chargeCurrentA: truth.chargeCurrentA,
    // Precondition is a fixed fraction of the programmed current on such chargers (a tenth).
    preconditionA: truth.chargeCurrentA / 10,
    regulationVPerCell: truth.regulationV / settings.cells,
    timerS,
    // The precondition timeout runs from the same oscillator: an eighth of the timer.
    preconditionTimeoutS: timerS / 8,
  };
}
