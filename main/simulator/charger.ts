/**
 * The firmware of the simulated charger: a state machine that reads its own measurements
 * (output voltage and current, the pack thermistor, whether the input can supply) and
 * decides what the power stage does next. It knows nothing of the model behind it, so every
 * phase and fault in a simulated trace comes from the physics, not from a script.
 */
import type { Chemistry } from '@shared/chemistry/types';

export type ChargerMode = 'precondition' | 'cc' | 'cv' | 'done' | 'fault' | 'sleep';

export type FaultReason =
  'timer' | 'precondition-timeout' | 'overtemp' | 'undertemp' | 'thermistor-open' | 'thermistor-short';

export interface ChargerSettings {
  chemistry: Chemistry;
  cells: number;
  /** CV (Li-ion, LiFePO4) or absorption (lead-acid) voltage per cell at 25 C. */
  regulationVPerCell: number;
  /** Lead-acid float voltage per cell at 25 C; null elsewhere. */
  floatVPerCell: number | null;
  /** Lead-acid set-point temperature compensation, volts per kelvin per cell; null elsewhere. */
  tempCompVPerKPerCell: number | null;
  chargeCurrentA: number;
  terminationA: number;
  preconditionVPerCell: number;
  preconditionA: number;
  /** Safety timer on charging time; null = none. */
  timerS: number | null;
  preconditionTimeoutS: number | null;
  hotCutoffC: number;
  coldCutoffC: number;
  /** A finished Li-ion / LiFePO4 pack is recharged when it sags this far below regulation. */
  rechargeDropVPerCell: number | null;
  /** NiMH: drop from the peak that ends the charge, and the initial time it is ignored. */
  minusDeltaVPerCell: number | null;
  minusDeltaMaskS: number;
  /** Lead-acid: longest absorption before float. */
  absorptionMaxS: number | null;
  /** Input-voltage regulation (MPPT set point) of the power stage; null = none. */
  inputSetpointV: number | null;
  /** How long the termination condition must hold before the charge ends (rejects dropouts). */
  terminationDeglitchS: number;
  /** Fault injection: the voltage reference creeps upward from `referenceDriftStartS`. */
  referenceDriftVPerCellPerH: number;
  referenceDriftStartS: number;
}

/** What the power stage is told to do: at most this current, at most this output voltage. */
export interface OutputCommand {
  enabled: boolean;
  currentA: number;
  voltageV: number;
}

/** What limited the output during the last step. */
export type OutputLimit = 'off' | 'current' | 'voltage' | 'input';

/** The firmware's own measurements after a step. */
export interface ChargerObservation {
  tS: number;
  dtS: number;
  vbatV: number;
  ibatA: number;
  /** Pack temperature from the NTC, or why there is none. */
  thermistor: { ok: true; tempC: number } | { ok: false; reason: 'open' | 'short' };
  limit: OutputLimit;
  /** Most current the input could support at the present pack voltage. */
  inputCanSupplyA: number;
}

export interface ChargerState {
  mode: ChargerMode;
  /** Mode to return to when the input comes back. */
  resumeMode: ChargerMode;
  modeSinceS: number;
  chargeTimeS: number;
  preconditionTimeS: number;
  absorptionTimeS: number;
  terminationHeldS: number;
  peakVbatV: number;
  fault: FaultReason | null;
}

export function initialChargerState(): ChargerState {
  return {
    mode: 'precondition',
    resumeMode: 'precondition',
    modeSinceS: 0,
    chargeTimeS: 0,
    preconditionTimeS: 0,
    absorptionTimeS: 0,
    terminationHeldS: 0,
    peakVbatV: 0,
    fault: null,
  };
}

const CHARGING: readonly ChargerMode[] = ['precondition', 'cc', 'cv'];
export const isCharging = (mode: ChargerMode): boolean => CHARGING.includes(mode);

/** Precondition ends this far above its threshold, so noise cannot make it chatter. */
const PRECONDITION_HYSTERESIS_V_PER_CELL = 0.05;

/** Regulation voltage of the whole pack now, with drift and lead-acid compensation. */
export function regulationV(
  s: ChargerSettings,
  tS: number,
  tempC: number | null,
  perCellV = s.regulationVPerCell,
): number {
  const driftH = Math.max(0, tS - s.referenceDriftStartS) / 3600;
  const comp = s.tempCompVPerKPerCell !== null && tempC !== null ? s.tempCompVPerKPerCell * (tempC - 25) : 0;
  return s.cells * (perCellV + comp + s.referenceDriftVPerCellPerH * driftH);
}

export function outputCommand(
  s: ChargerSettings,
  st: ChargerState,
  tS: number,
  tempC: number | null,
): OutputCommand {
  switch (st.mode) {
    case 'precondition':
      return { enabled: true, currentA: s.preconditionA, voltageV: regulationV(s, tS, tempC) };
    case 'cc':
    case 'cv':
      return { enabled: true, currentA: s.chargeCurrentA, voltageV: regulationV(s, tS, tempC) };
    case 'done':
      // Lead-acid holds the battery at float; the others switch the output off.
      if (s.floatVPerCell !== null) {
        return {
          enabled: true,
          currentA: s.chargeCurrentA,
          voltageV: regulationV(s, tS, tempC, s.floatVPerCell),
        };
      }
      return { enabled: false, currentA: 0, voltageV: 0 };
    default:
      return { enabled: false, currentA: 0, voltageV: 0 };
  }
}

export interface ChargerUpdate {
  state: ChargerState;
  /** Lines the firmware prints (without the leading `#`). */
  messages: string[];
}

const FAULT_TEXT: Record<FaultReason, string> = {
  timer: 'safety timer expired before termination',
  'precondition-timeout': 'pack did not leave precondition in time',
  overtemp: 'pack too hot, charging stopped',
  undertemp: 'pack too cold, charging stopped',
  'thermistor-open': 'thermistor input at the rail (open NTC)',
  'thermistor-short': 'thermistor input at zero (shorted NTC)',
};

/** One firmware pass after a step of `obs.dtS` seconds. */
export function updateCharger(
  s: ChargerSettings,
  prev: ChargerState,
  obs: ChargerObservation,
): ChargerUpdate {
  const st: ChargerState = { ...prev };
  const messages: string[] = [];
  const enter = (mode: ChargerMode, why: string): void => {
    if (st.mode === mode) return;
    messages.push(`stage ${st.mode} -> ${mode}: ${why}`);
    st.mode = mode;
    st.modeSinceS = obs.tS;
    st.terminationHeldS = 0;
  };
  const fault = (reason: FaultReason): void => {
    st.fault = reason;
    enter('fault', FAULT_TEXT[reason]);
  };
  if (st.mode === 'fault') return { state: st, messages };

  // Thermistor checks run in every mode: an open or shorted NTC, or a pack out of window.
  const th = obs.thermistor;
  if (!th.ok) {
    fault(th.reason === 'open' ? 'thermistor-open' : 'thermistor-short');
    return { state: st, messages };
  }
  const floating = st.mode === 'done' && s.floatVPerCell !== null;
  if (th.tempC > s.hotCutoffC && (isCharging(st.mode) || floating)) {
    fault('overtemp');
    return { state: st, messages };
  }
  if (th.tempC < s.coldCutoffC && isCharging(st.mode)) {
    fault('undertemp');
    return { state: st, messages };
  }

  if (isCharging(st.mode)) {
    st.chargeTimeS += obs.dtS;
    if (s.timerS !== null && st.chargeTimeS >= s.timerS) {
      fault('timer');
      return { state: st, messages };
    }
  }
  if (st.mode === 'precondition') {
    st.preconditionTimeS += obs.dtS;
    if (s.preconditionTimeoutS !== null && st.preconditionTimeS >= s.preconditionTimeoutS) {
      fault('precondition-timeout');
      return { state: st, messages };
    }
  }

  // Input too weak (cloud, dusk, night): sleep with the timers paused, resume when it returns.
  const sleepBelowA = Math.max(0.005, 0.01 * s.chargeCurrentA);
  if (isCharging(st.mode) && obs.inputCanSupplyA < sleepBelowA) {
    st.resumeMode = st.mode;
    enter('sleep', 'input too weak');
    return { state: st, messages };
  }
  if (st.mode === 'sleep') {
    if (obs.inputCanSupplyA >= 3 * sleepBelowA) enter(st.resumeMode, 'input back');
    return { state: st, messages };
  }

  const perCellV = obs.vbatV / s.cells;
  switch (st.mode) {
    case 'precondition':
      if (perCellV >= s.preconditionVPerCell + PRECONDITION_HYSTERESIS_V_PER_CELL)
        enter('cc', 'pack above precondition threshold');
      break;
    case 'cc':
      if (s.minusDeltaVPerCell !== null) {
        // NiMH: constant current until the voltage falls from its peak (-dV).
        if (obs.tS - st.modeSinceS >= s.minusDeltaMaskS) {
          st.peakVbatV = Math.max(st.peakVbatV, obs.vbatV);
          if (obs.vbatV <= st.peakVbatV - s.minusDeltaVPerCell * s.cells) enter('done', '-dV detected');
        }
      } else if (obs.limit === 'voltage') {
        enter('cv', 'regulation voltage reached');
      }
      break;
    case 'cv': {
      if (s.floatVPerCell !== null) st.absorptionTimeS += obs.dtS;
      const tapered = obs.limit === 'voltage' && obs.ibatA < s.terminationA;
      st.terminationHeldS = tapered ? st.terminationHeldS + obs.dtS : 0;
      if (st.terminationHeldS >= s.terminationDeglitchS) {
        enter(
          'done',
          s.floatVPerCell !== null ? 'absorption current low, float' : 'termination current reached',
        );
      } else if (s.absorptionMaxS !== null && st.absorptionTimeS >= s.absorptionMaxS) {
        enter('done', 'absorption time over, float');
      }
      break;
    }
    case 'done':
      if (s.rechargeDropVPerCell !== null && perCellV < s.regulationVPerCell - s.rechargeDropVPerCell) {
        st.chargeTimeS = 0;
        enter('cc', 'pack sagged, recharging');
      }
      break;
  }
  return { state: st, messages };
}

export function faultMessage(reason: FaultReason): string {
  return FAULT_TEXT[reason];
}
