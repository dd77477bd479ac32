/**
 * Charger boards on the burn-in bench: one invented design (a garden-sensor charger board,
 * 3S Li-ion, 1.0 A, 12.6 V, 240 min timer), built in spec or with one part out of spec, and a
 * batch of boards whose parts are drawn from a seeded spread. Every out-of-spec board is out
 * of spec through a part value in the model (board.ts), never through a changed setting.
 */
import { gardenSensorPack } from '@shared/chemistry/demo-profiles';
import { nominalRange } from '@shared/engine/checks/tolerances';
import type { ExpectRanges } from '@shared/chemistry/types';
import type { ThermistorModel } from '@shared/telemetry/types';
import { boardTruth, nominalParts, withBoardParts, type BoardParts, type BoardTruth } from './board';
import { DEFAULT_CONVERTER } from './converter';
import { chargerSettingsFor } from './firmware-defaults';
import { createRng } from './rng';
import type { ExpectedOutcome, ProfileJson, Scenario } from './types';

const THERMISTOR: ThermistorModel = { model: 'beta', r25: 10000, beta: 3435, pullupOhm: 10000, adcMax: 4095 };

/** The design of the demo board (invented). */
export const BOARD_DESIGN = { chargeCurrentA: 1.0, regulationV: 12.6, timerMin: 240, terminationA: 0.1 };

/**
 * The design's expected values. Limits from the default tolerances (regulation ±1 %, current
 * ±10 %: single-cell linear Li-ion charger ICs' datasheets; termination ±15 %, timer ±10 %:
 * common practice); charge time, temperature rise and efficiency are this demo design's own.
 */
export function boardExpect(): ExpectRanges {
  return {
    chargeCurrentA: nominalRange('chargeCurrentA', BOARD_DESIGN.chargeCurrentA) ?? undefined,
    regulationV: nominalRange('regulationV', BOARD_DESIGN.regulationV) ?? undefined,
    terminationA: nominalRange('terminationA', BOARD_DESIGN.terminationA) ?? undefined,
    timerMin: nominalRange('timerMin', BOARD_DESIGN.timerMin) ?? undefined,
    efficiency: [0.8, 0.98],
    tempRiseC: [0, 15],
    chargeTimeMin: [90, 240],
  };
}

export function boardProfile(): ProfileJson {
  return {
    name: 'garden-sensor charger board GS, 3S Li-ion (demo)',
    ...gardenSensorPack(),
    thermistor: THERMISTOR,
    expect: boardExpect(),
  };
}

export interface BoardScenario extends Scenario {
  board: string;
  parts: BoardParts;
  truth: BoardTruth;
}

/** One board on the bench: a 2.5 Ah pack from 10 % on a 15 V adapter, 4 h of burn-in. */
export function boardScenario(
  name: string,
  board: string,
  parts: BoardParts,
  description: string,
  expected: ExpectedOutcome = CHARGES_CLEANLY,
): BoardScenario {
  const profile = boardProfile();
  return {
    name,
    board,
    parts,
    truth: boardTruth(parts),
    description,
    durationS: 4 * 3600,
    profile,
    reportsNtc: false,
    bench: {
      pack: {
        chemistry: 'li-ion',
        cells: 3,
        capacityAh: 2.5,
        seriesOhmPerCell: 0.05,
        polarisationOhmPerCell: 0.03,
        polarisationTauS: 90,
        acceptanceVPerC: 0.005,
        acceptanceKneeSoc: 1,
        voltsPerKPerCell: 0,
        shortedCells: 0,
        selfDischargeA: 0,
      },
      initialSoc: 0.1,
      thermal: {
        heatCapacityJPerK: 180,
        thermalResistanceKPerW: 12,
        ambientC: 24,
        chargerCouplingFraction: 0.25,
      },
      supply: { kind: 'adapter', nominalV: 15, outputOhm: 0.3, currentLimitA: 2 },
      converter: DEFAULT_CONVERTER,
      thermistor: THERMISTOR,
      thermistorOpensAtS: null,
      contact: null,
      charger: withBoardParts(chargerSettingsFor(profile), parts),
    },
    expected,
  };
}

/** What the pipeline shows for a board that charges to the end (its values may still be out of spec). */
const CHARGES_CLEANLY: ExpectedOutcome = {
  summary: 'cc -> cv -> done, no critical alarm, no fault (the checks judge the values)',
  phases: ['cc', 'cv', 'done'],
  alarms: [],
  noCritical: true,
  fault: false,
};

const nominal = () => nominalParts(BOARD_DESIGN);

/** The single-board scenarios: in spec, and each with one part out of spec. */
export const BOARD_BUILDERS: Record<string, () => BoardScenario> = {
  'board-in-spec': () =>
    boardScenario(
      'board-in-spec',
      'GS-0001',
      nominal(),
      'Charger board GS with nominal parts: passes every check.',
    ),
  'board-sense-low': () =>
    boardScenario(
      'board-sense-low',
      'GS-0002',
      { ...nominal(), senseOhm: nominal().senseOhm * 0.8 },
      'Charger board GS with its sense resistor 20 % low: 1.25 A instead of 1.0 A, fails chargeCurrentA.',
    ),
  'board-sense-high': () =>
    boardScenario(
      'board-sense-high',
      'GS-0003',
      { ...nominal(), senseOhm: nominal().senseOhm * 1.2 },
      'Charger board GS with its sense resistor 20 % high: 0.83 A instead of 1.0 A, fails chargeCurrentA.',
    ),
  'board-divider-high': () => {
    const parts = nominal();
    // R_top so that 1.2 V x (1 + R_top / R_bottom) = 3 x 4.25 V.
    parts.dividerTopOhm = parts.dividerBottomOhm * ((3 * 4.25) / 1.2 - 1);
    return boardScenario(
      'board-divider-high',
      'GS-0004',
      parts,
      'Charger board GS whose feedback divider sets 4.25 V/cell (12.75 V): fails regulationV.',
      {
        summary: 'cc -> cv -> done held at 4.25 V/cell: the overvoltage alarm at the chemistry limit',
        phases: ['cc', 'cv', 'done'],
        alarms: ['overvoltage'],
        noCritical: false,
        fault: false,
      },
    );
  },
  'board-timer-cap-half': () =>
    boardScenario(
      'board-timer-cap-half',
      'GS-0005',
      { ...nominal(), timingCapF: nominal().timingCapF / 2 },
      'Charger board GS with half the timing capacitance: the safety timer faults at 120 min, fails timerMin.',
      {
        summary: 'cc until the halved safety timer runs out at 120 min: the fault output',
        phases: ['cc', 'fault'],
        alarms: ['fault-pin'],
        noCritical: false,
        fault: true,
      },
    ),
};

/**
 * A burn-in batch: `count` boards whose parts come from one lot with a spread (seeded). Sense
 * resistors spread with sigma 6 % (a lot of 5 % parts at the edge), divider top resistors with
 * sigma 0.6 %, timing capacitors with sigma 2 % (invented lot spreads, wide enough that some
 * boards land out of spec).
 */
export function batchBoards(count: number, seed: number): BoardScenario[] {
  const rng = createRng(seed);
  const out: BoardScenario[] = [];
  for (let k = 1; k <= count; k++) {
    const n = nominal();
    const parts: BoardParts = {
      senseOhm: n.senseOhm * (1 + rng.normal(0.06)),
      dividerTopOhm: n.dividerTopOhm * (1 + rng.normal(0.006)),
      dividerBottomOhm: n.dividerBottomOhm,
      timingCapF: n.timingCapF * (1 + rng.normal(0.02)),
    };
    const board = `GS-${String(100 + k).padStart(4, '0')}`;
    out.push(
      boardScenario(`batch-board-${k}`, board, parts, `Board ${board} of a burn-in batch (seed ${seed}).`),
    );
  }
  return out;
}

/** Whether the model's truth of a board is inside the design's limits (its expected verdict). */
export function truthInSpec(truth: BoardTruth, expect: ExpectRanges = boardExpect()): boolean {
  const inside = (v: number, r?: [number, number]) => !r || (v >= r[0] && v <= r[1]);
  return (
    inside(truth.chargeCurrentA, expect.chargeCurrentA) &&
    inside(truth.regulationV, expect.regulationV) &&
    inside(truth.timerMin, expect.timerMin)
  );
}
