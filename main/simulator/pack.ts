/**
 * Electrical model of a battery pack of cells in series: open-circuit voltage against state
 * of charge, a series resistance, one RC polarisation pair, a charge-acceptance
 * overpotential that grows as the active material runs out (what makes CV current taper),
 * coulombic acceptance below 1 near full (the rest turns into heat: NiMH oxygen
 * recombination, lead-acid gassing), a voltage temperature coefficient, self-discharge and
 * shorted cells. Pure and deterministic.
 */
import type { Chemistry } from '@shared/chemistry/types';
import { cellOcvV, maxSoc } from './ocv';

export interface PackParams {
  chemistry: Chemistry;
  cells: number;
  capacityAh: number;
  /** Ohmic resistance of one cell including its share of the pack wiring. */
  seriesOhmPerCell: number;
  /** RC polarisation pair of one cell. */
  polarisationOhmPerCell: number;
  polarisationTauS: number;
  /** Acceptance overpotential per cell at 1C and empty: eta = k * (I/C) / (socMax - soc + 0.002). */
  acceptanceVPerC: number;
  /** State of charge above which part of the current no longer charges the cell (1 = never). */
  acceptanceKneeSoc: number;
  /** Change of cell voltage with temperature, volts per kelvin (negative for NiMH). */
  voltsPerKPerCell: number;
  /** Cells that are shorted inside: they hold no charge and show almost no voltage. */
  shortedCells: number;
  /** Leakage current inside the pack (self-discharge), amperes. */
  selfDischargeA: number;
}

export interface PackState {
  /** State of charge of the healthy cells, 0..1 (a little above 1 when overcharged). */
  soc: number;
  /** Voltage across one cell's RC polarisation pair. */
  polarisationV: number;
}

/** Residual resistance of a cell shorted inside (invented demo value). */
const SHORTED_CELL_OHM = 0.02;
/** Keeps the acceptance overpotential finite at 100 % state of charge. */
const ACCEPTANCE_FLOOR = 0.002;

export function healthyCells(p: PackParams): number {
  return Math.max(0, p.cells - p.shortedCells);
}

/** Fraction of the charge current that is stored at a state of charge (0..1). */
export function chargeAcceptance(p: PackParams, soc: number): number {
  if (soc <= p.acceptanceKneeSoc || p.acceptanceKneeSoc >= 1) return 1;
  const x = Math.min(1, (soc - p.acceptanceKneeSoc) / (1 - p.acceptanceKneeSoc));
  return Math.max(0, 1 - x * x);
}

function polarisationAfter(p: PackParams, s: PackState, iA: number, dtS: number): number {
  if (p.polarisationTauS <= 0) return iA * p.polarisationOhmPerCell;
  const decay = Math.exp(-dtS / p.polarisationTauS);
  return s.polarisationV * decay + iA * p.polarisationOhmPerCell * (1 - decay);
}

/** Open-circuit voltage of the whole pack at a temperature. */
export function packOcvV(p: PackParams, s: PackState, tempC: number): number {
  return healthyCells(p) * (cellOcvV(p.chemistry, s.soc) + p.voltsPerKPerCell * (tempC - 25));
}

/**
 * Pack terminal voltage as a function of the current that will flow for the next `dtS`
 * seconds (positive = charging). It uses the polarisation at the end of the step, so a
 * charger solving for its CV current stays stable at any step length. The parts that do not
 * depend on the current are worked out once, because a charger evaluates this many times a
 * step while it searches for its operating point.
 */
export function packVoltageCurve(
  p: PackParams,
  s: PackState,
  tempC: number,
  dtS: number,
): (iA: number) => number {
  const n = healthyCells(p);
  const ocvV = packOcvV(p, s, tempC);
  const decay = p.polarisationTauS > 0 ? Math.exp(-dtS / p.polarisationTauS) : 0;
  const restingPolarisationV = s.polarisationV * decay;
  const polarisationOhm = p.polarisationOhmPerCell * (1 - decay);
  const acceptanceOhm =
    p.acceptanceVPerC / p.capacityAh / (Math.max(0, maxSoc(p.chemistry) - s.soc) + ACCEPTANCE_FLOOR);
  return (iA) => {
    const perCell =
      iA * p.seriesOhmPerCell +
      restingPolarisationV +
      iA * polarisationOhm +
      (iA > 0 ? iA * acceptanceOhm : 0);
    return ocvV + n * perCell + p.shortedCells * iA * SHORTED_CELL_OHM;
  };
}

export function packTerminalV(p: PackParams, s: PackState, iA: number, tempC: number, dtS: number): number {
  return packVoltageCurve(p, s, tempC, dtS)(iA);
}

export interface PackStep {
  state: PackState;
  /** Heat released in the pack during the step, watts. */
  heatW: number;
  /** Electrical power into the pack terminals, watts. */
  powerW: number;
}

/** Advances the pack by `dtS` with `iA` flowing into its terminals. */
export function stepPack(p: PackParams, s: PackState, iA: number, tempC: number, dtS: number): PackStep {
  const n = healthyCells(p);
  const terminalV = packTerminalV(p, s, iA, tempC, dtS);
  const powerW = terminalV * iA;
  const accepted = iA > 0 ? iA * chargeAcceptance(p, s.soc) : iA;
  const socNext = Math.min(
    maxSoc(p.chemistry),
    Math.max(0, s.soc + ((accepted - p.selfDischargeA) * dtS) / (3600 * p.capacityAh)),
  );
  const polarisationV = polarisationAfter(p, s, iA, dtS);
  // Stored power follows the state of charge actually gained (a full pack stores nothing;
  // self-discharge makes it negative), and whatever is not stored is heat.
  const storedW = ((socNext - s.soc) * 3600 * p.capacityAh * n * cellOcvV(p.chemistry, s.soc)) / dtS;
  const heatW = Math.max(0, powerW - storedW);
  return { state: { soc: socNext, polarisationV }, heatW, powerW };
}
