/**
 * Open-circuit voltage of one cell against state of charge, per chemistry. The end points
 * follow the published check values the project keeps (Li-ion full at 4.20 V/cell, LiFePO4
 * plateau 3.2-3.3 V and 2.5 V low cut-off, lead-acid fully charged and discharged cells);
 * the shape between them is a smooth demo curve drawn from memory of typical cells, not a
 * datasheet: it is for the built-in simulated charger only.
 */
import type { Chemistry } from '@shared/chemistry/types';

/** [state of charge 0..1, volts per cell], sorted by state of charge. */
export type OcvTable = readonly (readonly [number, number])[];

export const OCV_TABLES: Record<Chemistry, OcvTable> = {
  // Graphite / NMC: full at the 4.20 V regulation voltage; ~3.0 V near empty, where chargers
  // precondition (published values of BU-409 and the precondition rows of the references).
  'li-ion': [
    [0, 3.0],
    [0.05, 3.3],
    [0.1, 3.45],
    [0.2, 3.58],
    [0.3, 3.65],
    [0.4, 3.71],
    [0.5, 3.76],
    [0.6, 3.82],
    [0.7, 3.9],
    [0.8, 3.98],
    [0.9, 4.08],
    [1, 4.2],
    // Beyond the rated full point (overcharge, only a faulty charger gets here): the voltage
    // keeps rising (demo shape).
    [1.05, 4.3],
    [1.1, 4.45],
  ],
  // High-voltage variant: same shape, full at 4.35 V/cell (published HV regulation voltage).
  'li-ion-hv': [
    [0, 3.0],
    [0.05, 3.32],
    [0.1, 3.48],
    [0.2, 3.61],
    [0.3, 3.69],
    [0.4, 3.76],
    [0.5, 3.82],
    [0.6, 3.89],
    [0.7, 3.98],
    [0.8, 4.07],
    [0.9, 4.19],
    [1, 4.35],
    [1.05, 4.45],
    [1.1, 4.6],
  ],
  // LiFePO4: 2.5 V low cut-off, a flat plateau at 3.2-3.3 V (nominal 3.2 V), a steep knee
  // at the top end of charge.
  lifepo4: [
    [0, 2.5],
    [0.03, 2.9],
    [0.08, 3.1],
    [0.15, 3.2],
    [0.3, 3.25],
    [0.5, 3.28],
    [0.7, 3.3],
    [0.9, 3.33],
    [0.95, 3.36],
    [0.98, 3.42],
    [1, 3.5],
  ],
  // Lead-acid resting voltage: about 1.95 V/cell empty (11.7 V per 12 V battery) to
  // 2.13 V/cell full (12.8 V), from memory; always below the 2.25-2.30 V/cell float.
  'lead-acid': [
    [0, 1.95],
    [0.2, 1.98],
    [0.4, 2.02],
    [0.6, 2.06],
    [0.8, 2.1],
    [1, 2.13],
  ],
  // NiMH: a long slope around 1.3 V/cell rising to ~1.47 V at full, from memory; the
  // charge-end voltage peak and -dV come from the thermal model, not from this table.
  nimh: [
    [0, 1.1],
    [0.05, 1.22],
    [0.15, 1.27],
    [0.4, 1.31],
    [0.7, 1.35],
    [0.85, 1.39],
    [0.93, 1.43],
    [0.98, 1.46],
    [1, 1.47],
  ],
};

/** Linear interpolation in a table, clamped at both ends. */
export function interpolate(table: OcvTable, x: number): number {
  if (x <= table[0][0]) return table[0][1];
  const last = table[table.length - 1];
  if (x >= last[0]) return last[1];
  for (let i = 1; i < table.length; i++) {
    const [x1, y1] = table[i];
    if (x <= x1) {
      const [x0, y0] = table[i - 1];
      return y0 + ((y1 - y0) * (x - x0)) / (x1 - x0);
    }
  }
  return last[1];
}

/** Highest state of charge a cell can be pushed to (above 1 only where the table says so). */
export function maxSoc(chemistry: Chemistry): number {
  const table = OCV_TABLES[chemistry];
  return table[table.length - 1][0];
}

/** Open-circuit voltage of one healthy cell at a state of charge (0..1). */
export function cellOcvV(chemistry: Chemistry, soc: number): number {
  return interpolate(OCV_TABLES[chemistry], soc);
}
