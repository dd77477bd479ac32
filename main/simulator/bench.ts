/**
 * The whole simulated bench: source -> charger power stage (driven by its firmware) ->
 * connection -> pack, with the pack's heat, its thermistor and the day's light. Stepped in
 * time; pure and deterministic for a given seed.
 */
import type { ThermistorModel, SourceKind } from '@shared/telemetry/types';
import { thermistorReading, thermistorTemperature, dividerOf } from '@shared/chemistry/thermistor';
import { packVoltageCurve, stepPack, type PackParams, type PackState } from './pack';
import { stepTemperatureC, type ThermalParams } from './thermal';
import { converterInputW, type ConverterParams } from './converter';
import { capacityOf, panelMaxPowerPoint, settle, type SupplyParams, type SupplyCapacity } from './supply';
import { createPanelState, type PanelThermalParams } from './panel-thermal';
import { setpointOnPath, type SetpointKnot } from './setpoint-path';
import {
  clearSkyWPerM2,
  cloudTransmission,
  makeClouds,
  type Cloud,
  type CloudParams,
  type DayParams,
} from './irradiance';
import {
  initialChargerState,
  isCharging,
  outputCommand,
  updateCharger,
  type ChargerSettings,
  type ChargerState,
  type ChargerMode,
  type FaultReason,
  type OutputLimit,
} from './charger';
import { makeContact, SOLID_CONTACT, type Contact, type ContactParams } from './contact';
import { createRng } from './rng';

export interface BenchParams {
  pack: PackParams;
  initialSoc: number;
  thermal: ThermalParams;
  supply: SupplyParams;
  /** Solar only: the day, the local clock time at run time 0, and the clouds. */
  day?: DayParams & { startClockH: number; clouds: CloudParams };
  charger: ChargerSettings;
  converter: ConverterParams;
  /** The NTC on the pack that the charger reads. */
  thermistor: ThermistorModel;
  /** Run time at which the NTC wire breaks; null = never. */
  thermistorOpensAtS: number | null;
  contact: ContactParams | null;
  /** Solar only: panel temperature from the light (reported as `tpanel`); none = fixed cell temperature. */
  panelThermal?: PanelThermalParams;
  /** The input set point over run time (a person turning the trimmer); none = the profile's, fixed. */
  setpointPath?: SetpointKnot[];
  /** Clouds at fixed times, besides the seeded ones (a scenario that needs one at a known moment). */
  fixedClouds?: Cloud[];
}

/** What is physically true on the bench at one instant (before any measurement noise). */
export interface BenchReadings {
  tS: number;
  vbatV: number;
  ibatA: number;
  /** True pack temperature. */
  packTempC: number;
  /** What the charger's ADC reads on the thermistor pin, counts (or ohms without a divider). */
  ntcReading: number;
  /** The charger's temperature from that reading; null when the NTC is open or shorted. */
  chargerTempC: number | null;
  vinV: number;
  iinA: number;
  chg: boolean;
  flt: boolean;
  src: SourceKind;
  mode: ChargerMode;
  fault: FaultReason | null;
  soc: number;
  irradianceWPerM2: number;
  /** Energy taken from the source and delivered into the pack since the start. */
  sourceWh: number;
  packWh: number;
  /** Solar only, the simulator's truth for tests: panel cell temperature and the panel's true
   *  maximum power point at this instant (null for an adapter). */
  panelTempC: number | null;
  truthMpp: { vV: number; pW: number } | null;
  /** The input set point the charger holds at this instant. */
  setpointV: number;
}

export interface Bench {
  /** Advances the bench by `dtS` seconds; returns the firmware's messages of that step. */
  step(dtS: number): string[];
  readings(): BenchReadings;
  readonly params: BenchParams;
}

/** Headroom a buck stage needs between its input and output (common practice, ~0.3-0.5 V). */
const HEADROOM_V = 0.4;
/** Irradiance resolution of the model: keeps the panel-curve cache useful, far below any effect. */
const IRRADIANCE_STEP_W_PER_M2 = 0.5;

/** Largest x in [0, hi] with f(x) <= target, for f increasing. */
function largestBelow(f: (x: number) => number, target: number, hi: number): number {
  if (f(hi) <= target) return hi;
  if (f(0) > target) return 0;
  let lo = 0;
  for (let k = 0; k < 40; k++) {
    const mid = (lo + hi) / 2;
    if (f(mid) <= target) lo = mid;
    else hi = mid;
  }
  return lo;
}

export function createBench(params: BenchParams, seed: number, spanS: number): Bench {
  const rng = createRng(seed);
  const clouds: Cloud[] = params.day
    ? [...makeClouds(rng, params.day.clouds, spanS), ...(params.fixedClouds ?? [])]
    : [];
  const contact: Contact = params.contact ? makeContact(rng, params.contact, spanS) : SOLID_CONTACT;
  const wiring = dividerOf(params.thermistor);
  const fixedSetpointV = params.charger.inputSetpointV ?? 0;
  const setpointAt = (t: number): number =>
    params.setpointPath ? setpointOnPath(params.setpointPath, t, fixedSetpointV) : fixedSetpointV;
  const panel = createPanelState(params.supply, params.panelThermal);

  let tS = 0;
  let pack: PackState = { soc: params.initialSoc, polarisationV: 0 };
  let tempC = params.thermal.ambientC;
  let charger: ChargerState = initialChargerState();
  let lastI = 0;
  let sourceWh = 0;
  let packWh = 0;
  let lastVin = 0;
  let lastIin = 0;

  const irradianceAt = (t: number): number => {
    if (!params.day) return 0;
    const clockH = params.day.startClockH + t / 3600;
    const raw = clearSkyWPerM2(params.day, clockH) * cloudTransmission(clouds, t);
    return Math.round(raw / IRRADIANCE_STEP_W_PER_M2) * IRRADIANCE_STEP_W_PER_M2;
  };

  const thermistorAt = (
    t: number,
  ): { reading: number; tempC: number | null; state: 'ok' | 'open' | 'short' } => {
    const opened = params.thermistorOpensAtS !== null && t >= params.thermistorOpensAtS;
    const reading = opened
      ? wiring
        ? wiring.position === 'pullup'
          ? wiring.adcMax
          : 0
        : Infinity
      : thermistorReading(params.thermistor, tempC);
    const conv = thermistorTemperature(params.thermistor, reading);
    if (conv.ok) return { reading, tempC: conv.tempC, state: 'ok' };
    return { reading, tempC: null, state: conv.reason === 'short' ? 'short' : 'open' };
  };

  /** Charger output voltage against current for the next step: the pack plus the contact. */
  const outputCurve = (dtS: number, t: number): ((iA: number) => number) => {
    const packV = packVoltageCurve(params.pack, pack, tempC, dtS);
    const contactOhm = contact.resistanceOhm(t);
    return (iA) => packV(iA) + iA * contactOhm;
  };

  /** Most current the supply can carry at the present pack voltage. */
  const supplyLimitA = (
    cap: SupplyCapacity,
    limitW: number,
    upToA: number,
    outputV: (iA: number) => number,
  ): number => {
    if (cap.openV < outputV(0) + HEADROOM_V || limitW <= 0) return 0;
    return largestBelow((i) => converterInputW(params.converter, outputV(i) * i, i), limitW, upToA);
  };

  function step(dtS: number): string[] {
    const irr = irradianceAt(tS);
    const setpointV = setpointAt(tS);
    panel.step(irr, dtS);
    const supply = panel.supply();
    const cap = capacityOf(supply, irr, setpointV);
    const th = thermistorAt(tS);
    const cmd = outputCommand(params.charger, charger, tS, th.tempC);
    const connected = contact.connected(tS);
    const outputV = outputCurve(dtS, tS);

    let iA = 0;
    let limit: OutputLimit = 'off';
    if (cmd.enabled && connected) {
      const byVoltage = largestBelow(outputV, cmd.voltageV, cmd.currentA);
      const wanted = Math.min(cmd.currentA, byVoltage);
      limit = byVoltage < cmd.currentA ? 'voltage' : 'current';
      iA = wanted;
      if (supplyLimitA(cap, cap.maxW, wanted, outputV) < wanted) {
        // The input cannot give it all: the charger regulates its input at the set point.
        iA = supplyLimitA(cap, cap.atSetpointW, wanted, outputV);
        limit = 'input';
      }
    }
    const canSupplyA = supplyLimitA(cap, cap.maxW, params.charger.chargeCurrentA, outputV);

    const vOut = outputV(iA);
    const pinW =
      iA > 0
        ? converterInputW(params.converter, vOut * iA, iA)
        : cap.openV > 3
          ? params.converter.quiescentW
          : 0;
    const lossW = pinW - vOut * iA;
    const contactHeatW = iA * iA * contact.resistanceOhm(tS);
    const stepped = stepPack(params.pack, pack, iA, tempC, dtS);
    const heatW = stepped.heatW + params.thermal.chargerCouplingFraction * (lossW + contactHeatW);
    const supplied = settle(supply, irr, pinW, setpointV);

    sourceWh += (supplied.pinW * dtS) / 3600;
    packWh += (stepped.powerW * dtS) / 3600;
    pack = stepped.state;
    tempC = stepTemperatureC(params.thermal, tempC, heatW, dtS);
    tS += dtS;
    lastI = iA;
    lastVin = supplied.vinV;
    lastIin = supplied.iinA;

    const after = thermistorAt(tS);
    const update = updateCharger(params.charger, charger, {
      tS,
      dtS,
      vbatV: measuredVbat(),
      ibatA: iA,
      thermistor:
        after.state === 'ok' && after.tempC !== null
          ? { ok: true, tempC: after.tempC }
          : { ok: false, reason: after.state === 'short' ? 'short' : 'open' },
      limit,
      inputCanSupplyA: canSupplyA,
    });
    charger = update.state;
    // The power stage obeys at once: a charger that stopped shows no current any more.
    if (!outputCommand(params.charger, charger, tS, after.tempC).enabled) lastI = 0;
    return update.messages;
  }

  function measuredVbat(): number {
    if (contact.connected(tS)) return outputCurve(0, tS)(lastI);
    // Battery off the output: an enabled stage floats up to its regulation voltage.
    const cmd = outputCommand(params.charger, charger, tS, null);
    return cmd.enabled ? cmd.voltageV : 0;
  }

  function readings(): BenchReadings {
    const th = thermistorAt(tS);
    const irr = irradianceAt(tS);
    const setpointV = setpointAt(tS);
    const supply = panel.supply();
    const cap = capacityOf(supply, irr, setpointV);
    const flowing = lastI > 0;
    const truth = supply.kind === 'panel' ? panelMaxPowerPoint(supply.panel, irr) : null;
    return {
      tS,
      vbatV: measuredVbat(),
      ibatA: lastI,
      packTempC: tempC,
      ntcReading: th.reading,
      chargerTempC: th.tempC,
      vinV: flowing ? lastVin : cap.openV,
      iinA: flowing ? lastIin : cap.openV > 3 ? params.converter.quiescentW / cap.openV : 0,
      chg: isCharging(charger.mode),
      flt: charger.mode === 'fault',
      src: cap.kind,
      mode: charger.mode,
      fault: charger.fault,
      soc: pack.soc,
      irradianceWPerM2: irr,
      sourceWh,
      packWh,
      panelTempC: panel.tempC(),
      truthMpp: truth ? { vV: truth.vV, pW: truth.pW } : null,
      setpointV,
    };
  }

  return { step, readings, params };
}
