/**
 * The simulated charger's own settings per chemistry: what its firmware uses unless a
 * scenario's profile sets a value. A real charger does not read Taperline's profile
 * defaults, so these are kept apart from shared/chemistry on purpose.
 */
import type { Chemistry } from '@shared/chemistry/types';
import type { ChargerSettings } from './charger';
import type { ProfileJson } from './types';

interface ChemistryFirmware {
  regulationVPerCell: number;
  floatVPerCell: number | null;
  tempCompVPerKPerCell: number | null;
  preconditionVPerCell: number;
  rechargeDropVPerCell: number | null;
  minusDeltaVPerCell: number | null;
  hotCutoffC: number;
  coldCutoffC: number;
}

export const CHEMISTRY_FIRMWARE: Record<Chemistry, ChemistryFirmware> = {
  // 4.20 V/cell CV and ~3.0 V precondition threshold (BU-409 and the precondition rows of
  // the references); hot cutoff at 50 C, the top of the JEITA reduced-voltage band; charge
  // refused below 0 C (common practice); recharge 100 mV/cell below regulation (common practice).
  'li-ion': {
    regulationVPerCell: 4.2,
    floatVPerCell: null,
    tempCompVPerKPerCell: null,
    preconditionVPerCell: 3.0,
    rechargeDropVPerCell: 0.1,
    minusDeltaVPerCell: null,
    hotCutoffC: 50,
    coldCutoffC: 0,
  },
  // High-voltage Li-ion: 4.35 V/cell (published HV regulation voltage); the rest as Li-ion.
  'li-ion-hv': {
    regulationVPerCell: 4.35,
    floatVPerCell: null,
    tempCompVPerKPerCell: null,
    preconditionVPerCell: 3.0,
    rechargeDropVPerCell: 0.1,
    minusDeltaVPerCell: null,
    hotCutoffC: 50,
    coldCutoffC: 0,
  },
  // LiFePO4: 3.60 V/cell CV (published, RightBattery / LFP cell specs); precondition below
  // 2.8 V/cell, above the 2.5 V low cut-off (invented firmware setting); 0-45 C charge window
  // of the AA Portable Power spec, with the cutoff 5 C above it (invented). A full LiFePO4
  // cell rests well under its CV voltage, so recharge waits for 3.35 V/cell (invented).
  lifepo4: {
    regulationVPerCell: 3.6,
    floatVPerCell: null,
    tempCompVPerKPerCell: null,
    preconditionVPerCell: 2.8,
    rechargeDropVPerCell: 0.25,
    minusDeltaVPerCell: null,
    hotCutoffC: 50,
    coldCutoffC: 0,
  },
  // Lead-acid: absorption 2.40 V/cell, float 2.30 V/cell at 25 C (BU-403 example; top of the published 2.25-2.30),
  // -3 mV/K/cell compensation (BU-403); 1.75 V/cell = fully discharged (published, Q&A level).
  'lead-acid': {
    regulationVPerCell: 2.4,
    floatVPerCell: 2.3,
    tempCompVPerKPerCell: -0.003,
    preconditionVPerCell: 1.75,
    rechargeDropVPerCell: null,
    minusDeltaVPerCell: null,
    hotCutoffC: 50,
    coldCutoffC: -10,
  },
  // NiMH: 1.6 V/cell safety clamp and 5 mV/cell -dV (cheali-charger docs); 55 C absolute
  // cutoff for AA cells (Panasonic charge methods); 1.0 V/cell precondition (invented).
  nimh: {
    regulationVPerCell: 1.6,
    floatVPerCell: null,
    tempCompVPerKPerCell: null,
    preconditionVPerCell: 1.0,
    rechargeDropVPerCell: null,
    minusDeltaVPerCell: 0.005,
    hotCutoffC: 55,
    coldCutoffC: 0,
  },
};

/** -dV is ignored for the first minutes of a charge (Panasonic: up to about 10 min). */
const MINUS_DELTA_MASK_S = 600;
/** The termination condition must hold this long, so a brief dropout does not end a charge (invented). */
const TERMINATION_DEGLITCH_S = 30;
/** Lead-acid absorption is ended after this long at most (common practice: a few hours). */
const ABSORPTION_MAX_S = 4 * 3600;
/**
 * The charger's timers run from an RC oscillator and come out a little long (invented 2 %;
 * charger timers carry a tolerance of several per cent), so a dashboard watching the same
 * limit sees it reached just before the charger acts on it.
 */
const TIMER_TOLERANCE = 1.02;

export interface FirmwareOverrides {
  hotCutoffC?: number;
  referenceDriftVPerCellPerH?: number;
  referenceDriftStartS?: number;
}

/** The charger's settings for a scenario: the profile's values, else the firmware's own. */
export function chargerSettingsFor(profile: ProfileJson, overrides: FirmwareOverrides = {}): ChargerSettings {
  const fw = CHEMISTRY_FIRMWARE[profile.chemistry];
  const capacityAh = profile.capacityAh ?? 1;
  const timerS = profile.timerMin !== undefined ? profile.timerMin * 60 * TIMER_TOLERANCE : null;
  const preconditionTimeoutS =
    profile.preconditionTimeoutMin !== undefined
      ? profile.preconditionTimeoutMin * 60 * TIMER_TOLERANCE
      : timerS !== null
        ? timerS / 8
        : 30 * 60 * TIMER_TOLERANCE;
  return {
    chemistry: profile.chemistry,
    cells: profile.cells,
    regulationVPerCell: profile.regulationVPerCell ?? fw.regulationVPerCell,
    floatVPerCell: fw.floatVPerCell,
    tempCompVPerKPerCell: fw.tempCompVPerKPerCell,
    chargeCurrentA: profile.chargeCurrentA ?? capacityAh / 2,
    terminationA: profile.terminationA ?? capacityAh / 10,
    preconditionVPerCell: profile.preconditionVPerCell ?? fw.preconditionVPerCell,
    preconditionA: profile.preconditionA ?? capacityAh / 10,
    timerS,
    preconditionTimeoutS,
    hotCutoffC: overrides.hotCutoffC ?? fw.hotCutoffC,
    coldCutoffC: fw.coldCutoffC,
    rechargeDropVPerCell: fw.rechargeDropVPerCell,
    minusDeltaVPerCell: fw.minusDeltaVPerCell,
    minusDeltaMaskS: MINUS_DELTA_MASK_S,
    absorptionMaxS: profile.chemistry === 'lead-acid' ? ABSORPTION_MAX_S : null,
    inputSetpointV: profile.inputSetpointV ?? null,
    terminationDeglitchS: TERMINATION_DEGLITCH_S,
    referenceDriftVPerCellPerH: overrides.referenceDriftVPerCellPerH ?? 0,
    referenceDriftStartS: overrides.referenceDriftStartS ?? 0,
  };
}
