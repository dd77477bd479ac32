/**
 * Default limits per chemistry. A profile only has to name its chemistry and cell count;
 * every other limit comes from here unless the profile overrides it.
 *
 * Each value names its source. Many sources are secondary copies of handbooks and
 * blog/wiki-level notes; cells and chargers vary, so every value here is a starting point
 * and the cell maker's datasheet wins.
 */
import type { Chemistry } from './types';

/** Per-chemistry defaults. Currents are C-fractions (multiples of capacityAh), voltages per cell. */
export interface ChemistryDefaults {
  regulationVPerCell: number;
  floatVPerCell: number | null;
  overvoltageVPerCell: number;
  preconditionVPerCell: number;
  preconditionC: number;
  terminationC: number;
  chargeCurrentC: number;
  tempWindowC: [number, number];
  minusDeltaVPerCell: number | null;
  dTdtCPerMin: number | null;
  tempCompVPerCPerCell: number | null;
  /** Chargers of this chemistry hold a constant-voltage stage (NiMH does not). */
  hasCv: boolean;
}

export const CHEMISTRY_DEFAULTS: Readonly<Record<Chemistry, Readonly<ChemistryDefaults>>> = {
  'li-ion': {
    // 4.20 V/cell ± 50 mV: Battery University BU-409 "Charging Lithium-ion" (published).
    regulationVPerCell: 4.2,
    floatVPerCell: null,
    // 4.25 V/cell "Vmax" in the standard band: TI E2E design note "JEITA Battery Temperature
    // Standard" (published, secondary summary of JEITA).
    overvoltageVPerCell: 4.25,
    // ≈ 3.0 V/cell pre-charge threshold: Junlee blog / ElectroDragon wiki "Lithium Battery Charge" (published, blog/wiki level).
    preconditionVPerCell: 3.0,
    // Pre-charge at most 0.1C: same sources as the threshold (published, blog/wiki level).
    preconditionC: 0.1,
    // C/10 termination (C/10 ≈ 95–98 % full, C/20 ≈ 100 %): Zufek blog "CC/CV charging protocol"
    // (published). The faster end is chosen because it is the usual charger-IC setting (common practice).
    terminationC: 0.1,
    // 0.5C charge current when the profile gives none (common practice).
    chargeCurrentC: 0.5,
    // 0–45 °C pre-JEITA charge window: TI E2E JEITA note (published, secondary).
    tempWindowC: [0, 45],
    minusDeltaVPerCell: null,
    dTdtCPerMin: null,
    tempCompVPerCPerCell: null,
    hasCv: true,
  },
  'li-ion-hv': {
    // 4.35 V/cell high-voltage cells: Zufek blog "CC/CV charging protocol"; Higherwire
    // "How Much Capacity Do 4.35 Volt Cells Lose at 4.20 Volts?" (published).
    regulationVPerCell: 4.35,
    floatVPerCell: null,
    // 4.40 V/cell: derived — the same 50 mV margin above regulation that the TI JEITA note
    // leaves between 4.20 V and its 4.25 V maximum for standard cells.
    overvoltageVPerCell: 4.4,
    // Same graphite-anode pre-charge rule as standard Li-ion: Junlee blog / ElectroDragon wiki (published, blog/wiki level).
    preconditionVPerCell: 3.0,
    preconditionC: 0.1,
    // C/10: Zufek blog (published), as for standard Li-ion.
    terminationC: 0.1,
    // 0.5C (common practice).
    chargeCurrentC: 0.5,
    // 0–45 °C: TI E2E JEITA note (published, secondary).
    tempWindowC: [0, 45],
    minusDeltaVPerCell: null,
    dTdtCPerMin: null,
    tempCompVPerCPerCell: null,
    hasCv: true,
  },
  lifepo4: {
    // 3.60 V/cell: RightBattery "LiPo/LiIon/LiFe Batteries" (published); AA Portable Power
    // LFP-26650 spec recommends 3.65 V (published).
    regulationVPerCell: 3.6,
    floatVPerCell: null,
    // 3.70 V/cell: derived — the 3.65 V recommended maximum (AA Portable Power LFP-26650 spec)
    // plus the 50 mV margin the TI JEITA note uses for Li-ion; the same spec's absolute maximum is 3.90 V.
    overvoltageVPerCell: 3.7,
    // 2.5 V/cell: the low cut-off of the AA Portable Power spec (published); a cell below its
    // cut-off is pre-charged gently (common practice).
    preconditionVPerCell: 2.5,
    // 0.1C pre-charge (common practice, as for Li-ion).
    preconditionC: 0.1,
    // ≤ 0.05C termination: Sunland IFR26650PE spec (published).
    terminationC: 0.05,
    // 0.5C (common practice).
    chargeCurrentC: 0.5,
    // 0–45 °C charge temperature: AA Portable Power LFP-26650 spec (published).
    tempWindowC: [0, 45],
    minusDeltaVPerCell: null,
    dTdtCPerMin: null,
    tempCompVPerCPerCell: null,
    hasCv: true,
  },
  'lead-acid': {
    // Absorption 2.40 V/cell at 25 °C: Battery University BU-403 "Charging Lead Acid" (published, copy).
    regulationVPerCell: 2.4,
    // Float 2.30 V/cell at 25 °C (AGM/gel datasheets give 2.25–2.30): Haze HZB12-200 datasheet;
    // BU-403 uses 2.30 V in its compensation example (published).
    floatVPerCell: 2.3,
    // 2.58 V/cell: the top of the Trojan User's Guide boost/equalise range 2.45–2.58 V/cell
    // (published); above it no charging stage of lead-acid is meant to go.
    overvoltageVPerCell: 2.58,
    // 1.75 V/cell = 10.5 V per 12 V battery, "fully discharged": electrical-engineering.app Q&A
    // (published, low-authority); a battery below it is charged gently first (common practice).
    preconditionVPerCell: 1.75,
    // 0.1C recovery current (common practice).
    preconditionC: 0.1,
    // Absorption ends at ≈ 3–5 % of rated capacity (from memory, unverified: BU-403 as recalled);
    // 0.05C is used so that absorption ends rather than lingering.
    terminationC: 0.05,
    // 0.2C bulk current (common practice for lead-acid chargers sized to the battery).
    chargeCurrentC: 0.2,
    // −20..50 °C charge window (from memory, unverified): lead-acid accepts charge below 0 °C
    // with temperature compensation; check the battery's datasheet.
    tempWindowC: [-20, 50],
    minusDeltaVPerCell: null,
    dTdtCPerMin: null,
    // −3 mV/°C/cell: BU-403 (2.30 V @25 °C -> 2.27 V @35 °C) (published). Trojan gel uses −5 mV.
    tempCompVPerCPerCell: -0.003,
    hasCv: true,
  },
  nimh: {
    // NiMH is charged at constant current; this "regulation" value is the voltage a full
    // charge reaches: ≥ 1.41 V/cell at C/10, 20 °C, PowerStream "NiMH Charging" (published).
    // It is used for estimates only; NiMH has no CV stage.
    regulationVPerCell: 1.41,
    floatVPerCell: null,
    // 1.6 V/cell safety limit during charge: cheali-charger docs "nimh_nicd_charging" (published).
    overvoltageVPerCell: 1.6,
    // 0.9 V/cell: cells below it get a gentle pre-charge first (from memory, unverified).
    preconditionVPerCell: 0.9,
    // 0.1C pre-charge (from memory, unverified).
    preconditionC: 0.1,
    // NiMH ends on −ΔV / dT/dt, not on current; 0.05C is the "charger has stopped / trickle"
    // current used to tell the end of the charge (common practice: C/20 maintenance trickle).
    terminationC: 0.05,
    // 0.5C: Panasonic "Charge Methods for NiMH" rapid charge 0.5–1C (published); −ΔV needs
    // ≥ 0.5C to be reliable, cheali-charger docs (published).
    chargeCurrentC: 0.5,
    // 0–40 °C rapid-charge window: Panasonic "Charge Methods for NiMH" (published).
    tempWindowC: [0, 40],
    // −ΔV ≈ 5 mV/cell: cheali-charger docs (published).
    minusDeltaVPerCell: 0.005,
    // dT/dt ≈ 1 °C/min (from memory, unverified; Duracell / Energizer handbooks treat dT/dt).
    dTdtCPerMin: 1,
    tempCompVPerCPerCell: null,
    hasCv: false,
  },
};

/** Capacity assumed when a profile gives neither capacityAh nor chargeCurrentA. Not from any
 * source: a neutral 1 Ah so that C-fractions have a scale. Anything scaled by it (SoC) is
 * withheld by the engine until the profile states capacityAh. */
export const ASSUMED_CAPACITY_AH = 1;

/** Silence after which telemetry counts as lost: 10 s (docs/codes.md default). */
export const DEFAULT_SILENCE_S = 10;

/** Precondition timeout without a safety timer: 30 min (docs/codes.md default). */
export const DEFAULT_PRECONDITION_TIMEOUT_MIN = 30;

/** With a safety timer, precondition may last timerMin/8: the usual rule of chargers with a
 * safety timer (docs/codes.md; common practice). */
export const PRECONDITION_TIMER_FRACTION = 1 / 8;

/** No progress in voltage or charge for 30 min counts as a stall (common practice: long enough
 * that a slow solar morning does not trip it, short enough to catch a stuck charge in one sitting). */
export const DEFAULT_STALL_MIN = 30;

/** Whether the chemistry has a CV (absorption) stage. */
export function chemistryHasCv(chemistry: Chemistry): boolean {
  return CHEMISTRY_DEFAULTS[chemistry].hasCv;
}
