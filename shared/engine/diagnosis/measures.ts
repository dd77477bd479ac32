/**
 * Measurements taken from a sample history that several cause modules need: delivered charge,
 * internal resistance from current steps (with the engine's step threshold), expected resistance.
 */
import type { Chemistry, ResolvedProfile } from '../../chemistry/types';
import { resistanceStepA } from '../limits';
import type { TimedSample } from '../types';

/** Charge into the pack over samples [0, end), trapezoid rule; intervals longer than `maxDtS` are skipped (gaps). */
export function deliveredAh(samples: readonly TimedSample[], end: number, maxDtS: number): number {
  let coulombs = 0;
  let prev: TimedSample | null = null;
  for (let i = 0; i < end; i++) {
    const s = samples[i];
    if (s.ibatA === undefined) continue;
    if (prev && prev.ibatA !== undefined) {
      const dt = s.t - prev.t;
      if (dt > 0 && dt <= maxDtS) coulombs += ((prev.ibatA + s.ibatA) / 2) * dt;
    }
    prev = s;
  }
  return coulombs / 3600; // 1 Ah = 3600 C (SI definition)
}

export interface ResistanceStep {
  t: number;
  deltaA: number;
  deltaV: number;
  ohm: number;
}

/**
 * Whole-pack resistance from sudden current steps: R = ΔV / ΔI between neighbouring samples.
 * Over one interval the open-circuit voltage barely moves, so the step is the ohmic drop.
 * Every step of the history is returned: the engine keeps only its last 9 (a live figure that
 * follows the pack), but a diagnosis judges the whole history before a fault, takes the median
 * over all of it (one late odd step must not decide) and compares early with late steps.
 */
export function resistanceSteps(
  samples: readonly TimedSample[],
  end: number,
  minStepA: number,
  maxDtS: number,
): ResistanceStep[] {
  const steps: ResistanceStep[] = [];
  for (let i = 1; i < end; i++) {
    const a = samples[i - 1];
    const b = samples[i];
    if (a.ibatA === undefined || b.ibatA === undefined || a.vbatV === undefined || b.vbatV === undefined)
      continue;
    const dt = b.t - a.t;
    if (dt <= 0 || dt > maxDtS) continue;
    const deltaA = b.ibatA - a.ibatA;
    if (Math.abs(deltaA) < minStepA) continue;
    const deltaV = b.vbatV - a.vbatV;
    const ohm = deltaV / deltaA;
    if (Number.isFinite(ohm) && ohm > 0) steps.push({ t: b.t, deltaA, deltaV, ohm });
  }
  return steps;
}

export function median(values: readonly number[]): number | null {
  if (values.length === 0) return null;
  const sorted = [...values].sort((x, y) => x - y);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

/** The engine's own step threshold (`resistanceStepA` in limits.ts), so both count the same steps. */
export const minResistanceStepA = (profile: ResolvedProfile): number => resistanceStepA(profile);

/**
 * Resistance × capacity of one healthy cell (Ω·Ah): DC resistance scales roughly inversely with
 * capacity within a chemistry. From memory, order of magnitude only (e.g. a 2.5 Ah Li-ion 18650
 * about 80 mΩ DC, an AA NiMH about 30 mΩ, a 100 Ah AGM block about 5 mΩ); used only to flag a
 * resistance several times higher.
 */
const CELL_OHM_AH: Record<Chemistry, number> = {
  'li-ion': 0.2,
  'li-ion-hv': 0.2,
  lifepo4: 0.1,
  'lead-acid': 0.08,
  nimh: 0.06,
};

/** Expected whole-pack DC resistance of a healthy pack of this profile, ohms. */
export function expectedPackResistance(profile: ResolvedProfile): number {
  const capacityAh = profile.capacityAh > 0 ? profile.capacityAh : 2;
  return (CELL_OHM_AH[profile.chemistry] / capacityAh) * profile.cells;
}

/** Longest run of consecutive history samples satisfying `test`, with its first/last index. */
export function longestStretch(
  samples: readonly TimedSample[],
  end: number,
  test: (s: TimedSample) => boolean,
): { from: number; to: number; durationS: number } | null {
  let best: { from: number; to: number; durationS: number } | null = null;
  let from = -1;
  for (let i = 0; i <= end; i++) {
    const ok = i < end && test(samples[i]);
    if (ok && from < 0) from = i;
    if (!ok && from >= 0) {
      const durationS = samples[i - 1].t - samples[from].t;
      if (!best || durationS > best.durationS) best = { from, to: i - 1, durationS };
      from = -1;
    }
  }
  return best;
}
