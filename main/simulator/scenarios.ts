/**
 * The built-in demo scenarios. Every pack, panel, charger and place here is invented for
 * demonstration; nothing describes a real product. Each scenario's outcome comes from a
 * physical cause in the model (a shorted cell, a hot box, weak light, a drifting
 * reference...), never from a scripted phase label.
 */
import { gardenSensorPack } from '@shared/chemistry/demo-profiles';
import type { ThermistorModel } from '@shared/telemetry/types';
import type { BenchParams } from './bench';
import { DEFAULT_CONVERTER } from './converter';
import { chargerSettingsFor, type FirmwareOverrides } from './firmware-defaults';
import type { PackParams } from './pack';
import { saturationCurrentForVocA, type PanelParams } from './solar';
import type { SupplyParams } from './supply';
import type { ThermalParams } from './thermal';
import type { ProfileJson, Scenario } from './types';
import type { Cloud, CloudParams, DayParams } from './irradiance';
import { BOARD_BUILDERS } from './board-scenarios';

/** Every demo board reads a 10 kOhm B3435 NTC through a 10 kOhm pull-up on a 12-bit ADC. */
const DEMO_THERMISTOR: ThermistorModel = {
  model: 'beta',
  r25: 10000,
  beta: 3435,
  pullupOhm: 10000,
  adcMax: 4095,
};

// --- building blocks (invented demo hardware) ---------------------------------------------

/** 3S pack of 2.5 Ah cylindrical Li-ion cells for a garden sensor. */
function gardenPack(overrides: Partial<PackParams> = {}): PackParams {
  return {
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
    ...overrides,
  };
}

function gardenProfile(name: string, overrides: Partial<ProfileJson> = {}): ProfileJson {
  return {
    name,
    ...gardenSensorPack(),
    thermistor: DEMO_THERMISTOR,
    ...overrides,
  };
}

const benchThermal = (overrides: Partial<ThermalParams> = {}): ThermalParams => ({
  heatCapacityJPerK: 180,
  thermalResistanceKPerW: 12,
  ambientC: 24,
  chargerCouplingFraction: 0.25,
  ...overrides,
});

/** A 15 V bench adapter with a 2 A limit. */
const BENCH_ADAPTER: SupplyParams = { kind: 'adapter', nominalV: 15, outputOhm: 0.3, currentLimitA: 2 };

/** A 36-cell panel whose open-circuit voltage at 1000 W/m2 is 21.6 V. */
function panel36(photoCurrentStcA: number): PanelParams {
  const base = {
    cellsInSeries: 36,
    ideality: 1.3,
    photoCurrentStcA,
    seriesOhm: 0.35,
    shuntOhm: 250,
    cellTempC: 25,
  };
  return { ...base, saturationCurrentA: saturationCurrentForVocA(base, 21.6) };
}

/** A 24-cell panel (open circuit 14.4 V at 1000 W/m2). */
function panel24(photoCurrentStcA: number): PanelParams {
  const base = {
    cellsInSeries: 24,
    ideality: 1.3,
    photoCurrentStcA,
    seriesOhm: 0.6,
    shuntOhm: 300,
    cellTempC: 25,
  };
  return { ...base, saturationCurrentA: saturationCurrentForVocA(base, 14.4) };
}

/** Set point 0.8 x Voc at 1000 W/m2, the usual fractional open-circuit rule (common practice). */
const setpointFor = (vocStcV: number): number => Math.round(0.8 * vocStcV * 10) / 10;

/** 4S LiFePO4 pack of a weather station or fence monitor. */
function lfpPack(capacityAh: number): PackParams {
  return {
    chemistry: 'lifepo4',
    cells: 4,
    capacityAh,
    seriesOhmPerCell: 0.015,
    polarisationOhmPerCell: 0.01,
    polarisationTauS: 120,
    acceptanceVPerC: 0.01,
    acceptanceKneeSoc: 1,
    voltsPerKPerCell: 0,
    shortedCells: 0,
    selfDischargeA: 0,
  };
}

function bench(
  profile: ProfileJson,
  parts: Omit<BenchParams, 'charger' | 'converter' | 'thermistor' | 'thermistorOpensAtS' | 'contact'> &
    Partial<Pick<BenchParams, 'thermistorOpensAtS' | 'contact'>>,
  firmware: FirmwareOverrides = {},
): BenchParams {
  return {
    converter: DEFAULT_CONVERTER,
    thermistor: profile.thermistor ?? DEMO_THERMISTOR,
    thermistorOpensAtS: null,
    contact: null,
    ...parts,
    charger: chargerSettingsFor(profile, firmware),
  };
}

function solarDay(day: DayParams, startClockH: number, clouds: CloudParams): BenchParams['day'] {
  return { ...day, startClockH, clouds };
}

// --- the scenarios -------------------------------------------------------------------------

function benchLiion3s(): Scenario {
  const profile = gardenProfile('garden-sensor 3S Li-ion (demo)');
  return {
    name: 'bench-liion-3s',
    description:
      'Garden-sensor 3S 2.5 Ah Li-ion pack on a 15 V bench adapter, from 30 %: CC, CV taper, done.',
    durationS: 2.5 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: gardenPack(),
      initialSoc: 0.3,
      thermal: benchThermal(),
      supply: BENCH_ADAPTER,
    }),
    expected: {
      summary: 'cc -> cv -> done, no critical alarm, no fault',
      phases: ['cc', 'cv', 'done'],
      alarms: [],
      noCritical: true,
      fault: false,
    },
  };
}

function solarLifepo4(): Scenario {
  const profile: ProfileJson = {
    name: 'weather-station 4S LiFePO4 (demo)',
    chemistry: 'lifepo4',
    cells: 4,
    capacityAh: 6,
    chargeCurrentA: 2.0,
    terminationA: 0.3,
    timerMin: 720,
    tempWindowC: [0, 45],
    inputSetpointV: setpointFor(21.6),
    thermistor: DEMO_THERMISTOR,
  };
  return {
    name: 'solar-lifepo4-4s',
    description:
      'Weather-station 4S 6 Ah LiFePO4 on a 30 W panel from 07:00 to 19:00 with clouds: sun-limited CC, CV, done.',
    durationS: 12 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: lfpPack(6),
      initialSoc: 0.3,
      thermal: {
        heatCapacityJPerK: 900,
        thermalResistanceKPerW: 4,
        ambientC: 21,
        chargerCouplingFraction: 0.2,
      },
      supply: { kind: 'panel', panel: panel36(1.8) },
      day: solarDay({ sunriseH: 6, sunsetH: 19, peakWPerM2: 950 }, 7, {
        perHour: 0.8,
        minDurationS: 300,
        maxDurationS: 1500,
        minDepth: 0.3,
        maxDepth: 0.8,
      }),
    }),
    expected: {
      summary: 'sun-limited cc, then cv (and done when the sun allows); no critical alarm, no fault',
      phases: ['cc', 'cv'],
      alarms: [],
      noCritical: true,
      fault: false,
    },
  };
}

function damagedCell(): Scenario {
  const profile = gardenProfile('garden-sensor 3S Li-ion, one cell shorted (demo)');
  return {
    name: 'damaged-cell',
    description:
      'Garden-sensor 3S pack with one cell shorted inside: stuck below the precondition threshold until the timeout faults.',
    durationS: 50 * 60,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: gardenPack({ shortedCells: 1 }),
      initialSoc: 0.2,
      thermal: benchThermal(),
      supply: BENCH_ADAPTER,
    }),
    expected: {
      summary: 'precondition, then precondition-timeout and the fault output',
      phases: ['precondition', 'fault'],
      alarms: ['precondition-timeout', 'fault-pin'],
      noCritical: false,
      fault: true,
    },
  };
}

function overheating(): Scenario {
  const profile = gardenProfile('garden-sensor 3S Li-ion in a sealed box (demo)', { chargeCurrentA: 1.5 });
  return {
    name: 'overheating',
    description:
      'Aged garden-sensor 3S pack charged at 1.5 A in a sealed box at 38 C: passes 45 C, the charger trips at 50 C.',
    durationS: 75 * 60,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: gardenPack({ seriesOhmPerCell: 0.09, polarisationOhmPerCell: 0.05 }),
      initialSoc: 0.3,
      thermal: {
        heatCapacityJPerK: 350,
        thermalResistanceKPerW: 18,
        ambientC: 38,
        chargerCouplingFraction: 0.8,
      },
      supply: BENCH_ADAPTER,
    }),
    expected: {
      summary: 'cc while the box heats, overtemp past 45 C, then the charger cuts off with its fault output',
      phases: ['cc', 'fault'],
      alarms: ['overtemp', 'fault-pin'],
      noCritical: false,
      fault: true,
    },
  };
}

function weakPanel(): Scenario {
  const profile: ProfileJson = {
    name: 'bird-box camera 2S Li-ion (demo)',
    chemistry: 'li-ion',
    cells: 2,
    capacityAh: 3,
    chargeCurrentA: 1.0,
    terminationA: 0.15,
    timerMin: 1200,
    tempWindowC: [0, 45],
    inputSetpointV: setpointFor(14.4),
    thermistor: DEMO_THERMISTOR,
  };
  return {
    name: 'weak-panel',
    description:
      'Bird-box camera 2S 3 Ah Li-ion on a 5 W panel, short winter day with long clouds: idle and sun-limited CC.',
    durationS: 10 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: gardenPack({ cells: 2, capacityAh: 3 }),
      initialSoc: 0.25,
      thermal: {
        heatCapacityJPerK: 200,
        thermalResistanceKPerW: 10,
        ambientC: 4,
        chargerCouplingFraction: 0.2,
      },
      supply: { kind: 'panel', panel: panel24(0.45) },
      day: solarDay({ sunriseH: 8, sunsetH: 16.5, peakWPerM2: 380 }, 7.5, {
        perHour: 0.5,
        minDurationS: 2400,
        maxDurationS: 6000,
        minDepth: 0.6,
        maxDepth: 0.9,
      }),
    }),
    expected: {
      summary: 'long idle and sun-limited cc; at most a warn input-low; never a critical alarm, no fault',
      phases: ['idle', 'cc'],
      alarms: [],
      noCritical: true,
      fault: false,
    },
  };
}

/** The demo boat's house bank (invented): 6-cell 12 V 100 Ah lead-acid, shared by its scenarios. */
const BOAT_HOUSE_BANK = {
  chemistry: 'lead-acid',
  cells: 6,
  capacityAh: 100,
  seriesOhmPerCell: 0.0008,
  polarisationOhmPerCell: 0.0005,
  polarisationTauS: 300,
  acceptanceVPerC: 0.55,
  acceptanceKneeSoc: 0.85,
  voltsPerKPerCell: 0,
  shortedCells: 0,
  selfDischargeA: 0,
} as const;

function leadAcidFloat(): Scenario {
  const profile: ProfileJson = {
    name: 'boat house battery 12 V 100 Ah lead-acid (demo)',
    chemistry: 'lead-acid',
    cells: 6,
    capacityAh: 100,
    chargeCurrentA: 10,
    terminationA: 2,
    timerMin: 960,
    tempWindowC: [0, 45],
    thermistor: DEMO_THERMISTOR,
  };
  return {
    name: 'lead-acid-float',
    description:
      'Boat house battery, 6-cell 12 V 100 Ah lead-acid on shore power in a warm engine bay: bulk, absorption, float.',
    durationS: 10 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: BOAT_HOUSE_BANK,
      initialSoc: 0.5,
      thermal: {
        heatCapacityJPerK: 24000,
        thermalResistanceKPerW: 0.7,
        ambientC: 30,
        chargerCouplingFraction: 0.05,
      },
      supply: { kind: 'adapter', nominalV: 20, outputOhm: 0.1, currentLimitA: 12 },
    }),
    expected: {
      summary: 'bulk (cc) -> absorption (cv) -> float (done), temperature-compensated set points',
      phases: ['cc', 'cv', 'done'],
      alarms: [],
      noCritical: true,
      fault: false,
    },
  };
}

function nimh4s(): Scenario {
  const profile: ProfileJson = {
    name: 'trail-camera 4xAA NiMH (demo)',
    chemistry: 'nimh',
    cells: 4,
    capacityAh: 2.0,
    chargeCurrentA: 1.0,
    timerMin: 180,
    // Rapid-charge window 0-40 C (Panasonic NiMH charge methods).
    tempWindowC: [0, 40],
    thermistor: DEMO_THERMISTOR,
  };
  return {
    name: 'nimh-4s',
    description:
      'Trail-camera 4xAA 2 Ah NiMH pack at 1 A (0.5C) from a 9 V adapter: constant current, voltage peak, -dV end.',
    durationS: 3 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: {
        chemistry: 'nimh',
        cells: 4,
        capacityAh: 2.0,
        seriesOhmPerCell: 0.025,
        polarisationOhmPerCell: 0.015,
        polarisationTauS: 60,
        acceptanceVPerC: 0,
        acceptanceKneeSoc: 0.9,
        // Cell voltage falls as the cell warms (invented demo coefficient): this turns the
        // overcharge heating at full charge into the -dV the charger looks for.
        voltsPerKPerCell: -0.005,
        shortedCells: 0,
        selfDischargeA: 0,
      },
      initialSoc: 0.2,
      thermal: {
        heatCapacityJPerK: 120,
        thermalResistanceKPerW: 25,
        ambientC: 22,
        chargerCouplingFraction: 0.15,
      },
      supply: { kind: 'adapter', nominalV: 9, outputOhm: 0.2, currentLimitA: 1.5 },
    }),
    expected: {
      summary: 'cc to the voltage peak, then -dV ends the charge (done); no fault',
      phases: ['cc', 'done'],
      alarms: [],
      noCritical: true,
      fault: false,
    },
  };
}

function openThermistor(): Scenario {
  const profile = gardenProfile('garden-sensor 3S Li-ion, raw NTC counts (demo)');
  return {
    name: 'open-thermistor',
    description:
      'Garden-sensor 3S pack reporting raw NTC counts; the NTC wire breaks 40 min in: ADC pinned at 4095, charger faults.',
    durationS: 60 * 60,
    profile,
    reportsNtc: true,
    bench: bench(profile, {
      pack: gardenPack(),
      initialSoc: 0.3,
      thermal: benchThermal(),
      supply: BENCH_ADAPTER,
      thermistorOpensAtS: 40 * 60,
    }),
    expected: {
      summary: 'cc, then the raw ntc pins at the rail and the charger asserts its fault output',
      phases: ['cc', 'fault'],
      alarms: ['fault-pin', 'sensor-fault'],
      noCritical: false,
      fault: true,
    },
  };
}

function looseConnection(): Scenario {
  const profile = gardenProfile('garden-sensor 3S Li-ion, worn connector (demo)');
  return {
    name: 'loose-connection',
    description:
      'Garden-sensor 3S pack through a worn connector: contact resistance steps up, then the contact opens for seconds at a time.',
    durationS: 2 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: gardenPack(),
      initialSoc: 0.35,
      thermal: benchThermal(),
      supply: BENCH_ADAPTER,
      contact: {
        baseOhm: 0.02,
        stepEveryS: 900,
        stepOhm: [0.03, 0.12],
        dropoutsFromS: 1800,
        dropoutEveryS: 240,
        dropoutS: [3, 15],
      },
    }),
    expected: {
      summary:
        'voltage steps with no current step, then dropouts (current to zero, voltage to the regulation set point)',
      phases: ['cc'],
      alarms: ['contact'],
      noCritical: false,
      fault: false,
    },
  };
}

function overvoltageDrift(): Scenario {
  const profile = gardenProfile('garden-sensor 3S Li-ion, failing charger reference (demo)');
  return {
    name: 'overvoltage-drift',
    description:
      'Garden-sensor 3S pack on a charger whose voltage reference creeps up 80 mV/cell per hour: CV climbs past 4.25 V/cell.',
    durationS: 2.5 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(
      profile,
      { pack: gardenPack(), initialSoc: 0.6, thermal: benchThermal(), supply: BENCH_ADAPTER },
      { referenceDriftVPerCellPerH: 0.08, referenceDriftStartS: 0 },
    ),
    expected: {
      summary: 'cc, cv that keeps climbing, overvoltage above the chemistry limit',
      phases: ['cc', 'cv'],
      alarms: ['overvoltage'],
      noCritical: false,
      fault: false,
    },
  };
}

function weakPanelTimer(): Scenario {
  const profile: ProfileJson = {
    name: 'fence-monitor 4S LiFePO4 (demo)',
    chemistry: 'lifepo4',
    cells: 4,
    capacityAh: 10,
    chargeCurrentA: 2.0,
    terminationA: 0.5,
    timerMin: 240,
    tempWindowC: [0, 45],
    inputSetpointV: setpointFor(21.6),
    thermistor: DEMO_THERMISTOR,
  };
  return {
    name: 'weak-panel-timer',
    description:
      'Fence-monitor 4S 10 Ah LiFePO4 on an undersized 10 W panel with a 4 h safety timer: the timer expires mid-charge.',
    durationS: 5 * 3600,
    profile,
    reportsNtc: false,
    bench: bench(profile, {
      pack: lfpPack(10),
      initialSoc: 0.3,
      thermal: {
        heatCapacityJPerK: 1400,
        thermalResistanceKPerW: 3,
        ambientC: 18,
        chargerCouplingFraction: 0.2,
      },
      supply: { kind: 'panel', panel: panel36(0.6) },
      day: solarDay({ sunriseH: 6.5, sunsetH: 18, peakWPerM2: 800 }, 8.5, {
        perHour: 0.5,
        minDurationS: 300,
        maxDurationS: 900,
        minDepth: 0.2,
        maxDepth: 0.4,
      }),
    }),
    expected: {
      summary:
        'sun-limited cc for hours, then the safety timer expires while current still flows: timer and fault',
      phases: ['cc', 'fault'],
      alarms: ['timer', 'fault-pin'],
      noCritical: false,
      fault: true,
    },
  };
}

// --- source sweeps: a person at the input set-point trimmer ---------------------------------

/**
 * A generic 36-cell "12 V" panel of about 20 W (open circuit 21.6 V, maximum power near 17.5 V at
 * 25 C and 1000 W/m2, the usual class figures, common practice); every parameter is invented for
 * the demo. Its voltage falls 0.36 %/C of Voc and its current rises 0.05 %/C of Isc.
 */
const SWEEP_PANEL_VOC_V = 21.6;
const SWEEP_PANEL_COEFF_PCT_PER_C = -0.36;
/** The set point the demo board left the bench with, turned by eye on a cold morning (invented). */
const SWEEP_START_SETPOINT_V = 18.4;
function sweepPanel(): PanelParams {
  return panel36(1.25);
}

/**
 * The trimmer's path from `startS`: from the set point up, slowly down across the range, up, and
 * back to `endV` (where the person leaves it).
 */
function trimmerPath(startS: number, fromV: number, endV: number): { tS: number; vV: number }[] {
  return [
    { tS: startS, vV: fromV },
    { tS: startS + 60, vV: 19.3 },
    { tS: startS + 390, vV: 13.8 },
    { tS: startS + 720, vV: 19.3 },
    { tS: startS + 780, vV: endV },
  ];
}

const HALF_HOUR_S = 30 * 60;

interface SweepDay {
  durationS: number;
  startClockH: number;
  path: { tS: number; vV: number }[];
  /** Seeded passing clouds per hour (0 = none), besides the fixed ones. */
  cloudsPerHour: number;
  clouds: Cloud[];
}

function sweepScenario(name: string, description: string, day: SweepDay): Scenario {
  const profile: ProfileJson = {
    name: 'boat house battery 12 V 100 Ah lead-acid on a 20 W panel (demo)',
    chemistry: 'lead-acid',
    cells: 6,
    capacityAh: 100,
    chargeCurrentA: 5,
    terminationA: 1,
    tempWindowC: [0, 45],
    inputSetpointV: SWEEP_START_SETPOINT_V,
    panelTempCoeffPctPerC: SWEEP_PANEL_COEFF_PCT_PER_C,
    thermistor: DEMO_THERMISTOR,
  };
  return {
    name,
    description,
    durationS: day.durationS,
    profile,
    reportsNtc: false,
    reportsPanelTemp: true,
    bench: {
      ...bench(profile, {
        pack: BOAT_HOUSE_BANK,
        initialSoc: 0.5,
        thermal: {
          heatCapacityJPerK: 24000,
          thermalResistanceKPerW: 0.7,
          ambientC: 10,
          chargerCouplingFraction: 0.05,
        },
        supply: { kind: 'panel', panel: sweepPanel() },
        day: solarDay({ sunriseH: 6, sunsetH: 20, peakWPerM2: 900 }, day.startClockH, {
          perHour: day.cloudsPerHour,
          minDurationS: 240,
          maxDurationS: 900,
          minDepth: 0.2,
          maxDepth: 0.6,
        }),
      }),
      panelThermal: {
        ambientC: 10,
        noctC: 45,
        tauS: 300,
        iscCoeffAPerC: 0.0005 * 1.25,
        vocCoeffVPerC: (SWEEP_PANEL_COEFF_PCT_PER_C / 100) * SWEEP_PANEL_VOC_V,
      },
      setpointPath: day.path,
      fixedClouds: day.clouds,
    },
    expected: {
      summary:
        'bulk (cc) limited by the panel throughout; at most a warn input-low while the set point is low',
      phases: ['cc'],
      alarms: [],
      noCritical: true,
      fault: false,
    },
  };
}

function sweepTrimmer(): Scenario {
  return sweepScenario(
    'sweep-trimmer',
    'Boat house 12 V lead-acid battery on a 20 W panel at steady noon light; a person turns the input set point slowly from 19.3 V down to 13.8 V and back.',
    {
      durationS: HALF_HOUR_S,
      startClockH: 12.5,
      path: trimmerPath(300, SWEEP_START_SETPOINT_V, SWEEP_START_SETPOINT_V),
      cloudsPerHour: 0,
      clouds: [],
    },
  );
}

function sweepClouds(): Scenario {
  return sweepScenario(
    'sweep-clouds',
    'The same set-point sweep as sweep-trimmer, with a cloud taking 40 % of the light during the upward turn.',
    {
      durationS: HALF_HOUR_S,
      startClockH: 12.5,
      path: trimmerPath(300, SWEEP_START_SETPOINT_V, SWEEP_START_SETPOINT_V),
      cloudsPerHour: 0,
      clouds: [{ startS: 800, durationS: 240, depth: 0.4 }],
    },
  );
}

function sweepDay(): Scenario {
  // Three sweeps an hour and a half apart from late morning, each leaving the set point a little
  // nearer the maximum; passing clouds in between (seeded).
  const path = [
    ...trimmerPath(600, SWEEP_START_SETPOINT_V, 17.6),
    ...trimmerPath(600 + 5400, 17.6, 17.0),
    ...trimmerPath(600 + 10800, 17.0, 16.7),
  ];
  return sweepScenario(
    'sweep-day',
    'The boat house panel from 10:00 to 14:00 with passing clouds; three set-point sweeps, each leaving the set point nearer the maximum.',
    { durationS: 4 * 3600, startClockH: 10, path, cloudsPerHour: 1.2, clouds: [] },
  );
}

const BUILDERS: Record<string, () => Scenario> = {
  'bench-liion-3s': benchLiion3s,
  'solar-lifepo4-4s': solarLifepo4,
  'damaged-cell': damagedCell,
  overheating,
  'weak-panel': weakPanel,
  'lead-acid-float': leadAcidFloat,
  'nimh-4s': nimh4s,
  'open-thermistor': openThermistor,
  'loose-connection': looseConnection,
  'overvoltage-drift': overvoltageDrift,
  'weak-panel-timer': weakPanelTimer,
  'sweep-trimmer': sweepTrimmer,
  'sweep-clouds': sweepClouds,
  'sweep-day': sweepDay,
  ...BOARD_BUILDERS,
};

export const SCENARIO_NAMES: readonly string[] = Object.keys(BUILDERS);

export interface ScenarioSummary {
  name: string;
  description: string;
  durationS: number;
  /** The expected outcome, in words. */
  outcome: string;
}

export function listScenarios(): ScenarioSummary[] {
  return SCENARIO_NAMES.map((name) => {
    const s = BUILDERS[name]();
    return { name, description: s.description, durationS: s.durationS, outcome: s.expected.summary };
  });
}

/** A fresh copy of a scenario; an unknown name throws an error listing the valid names. */
export function getScenario(name: string): Scenario {
  const build = Object.prototype.hasOwnProperty.call(BUILDERS, name) ? BUILDERS[name] : undefined;
  if (!build) throw new Error(`unknown scenario "${name}"; valid scenarios: ${SCENARIO_NAMES.join(', ')}`);
  return build();
}
