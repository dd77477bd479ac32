/**
 * NiMH −ΔV on noisy telemetry: the charge must never end on noise alone, and the true −ΔV
 * after the voltage peak must still end it. A sweep of seeds, noise levels and sample
 * intervals on a 1-cell pack (the hardest case: no averaging over cells).
 *
 * The charge curve is invented (a 2 Ah cell at 1 A, a flat plateau, a rounded peak at 105 %
 * of capacity, then the fall past full); only its shape matters.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { createRunEngine } from '@shared/engine/run-engine';
import type { TimedSample } from '@shared/engine/types';
import { noise } from './engine-synthetic';

/** Normal noise of unit σ from the deterministic uniform generator (Box–Muller). */
function gaussian(seed: number): () => number {
  const rnd = noise(seed);
  return () => {
    const u = rnd() + 0.5 || 1e-12;
    const v = rnd() + 0.5;
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
}

const CAPACITY_AH = 2;
const CURRENT_A = 1; // 0.5C: −ΔV needs ≥ 0.5C to be reliable (cheali-charger docs, published)
const SECONDS_PER_SOC = (CAPACITY_AH / CURRENT_A) * 3600;
const PEAK_SOC = 1.05;
const PEAK_T = PEAK_SOC * SECONDS_PER_SOC;

/** Invented 1-cell curve, V: rise, a flat plateau (10 mV over 70 % of charge), rounded peak, fall. */
function cellV(soc: number): number {
  if (soc < 0.1) return 1.28 + 1.2 * soc;
  if (soc < 0.8) return 1.4 + (0.01 * (soc - 0.1)) / 0.7;
  const x = soc - PEAK_SOC;
  return 1.45 - (x < 0 ? 0.04 * (x / 0.25) ** 2 : 0.5 * x * x);
}

/** Time the charge ended (phase done), NaN if it did not. */
function endOfCharge(sigmaV: number, dtS: number, seed: number): number {
  const engine = createRunEngine(
    profileFromChemistry('nimh', 1, { capacityAh: CAPACITY_AH, chargeCurrentA: CURRENT_A }),
  );
  const g = gaussian(seed);
  for (let t = 0; t <= 9200; t += dtS) {
    const s: TimedSample = {
      t,
      rxS: t,
      vbatV: cellV(t / SECONDS_PER_SOC) + sigmaV * g(),
      ibatA: CURRENT_A,
      tempC: 25,
      extra: {},
    };
    for (const e of engine.push(s)) if (e.type === 'phase' && e.phase === 'done') return e.t;
  }
  return NaN;
}

test('NiMH −ΔV: no false end on noise up to σ = 6 mV on a 1-cell pack, true −ΔV still caught', () => {
  // −ΔV ≈ 5 mV/cell (cheali-charger docs "nimh_nicd_charging", published): the drop past the
  // peak reaches 5 mV about 14 min after it on this curve, 10 mV about 20 min after.
  const seeds = 20;
  for (const dtS of [1, 2, 5]) {
    for (const sigmaMv of [3, 5, 6]) {
      let falseEnds = 0;
      let missed = 0;
      let latestS = 0;
      for (let seed = 1; seed <= seeds; seed++) {
        const endT = endOfCharge(sigmaMv / 1000, dtS, seed * 7919);
        if (endT !== endT) missed++;
        else if (endT < PEAK_T) falseEnds++;
        else latestS = Math.max(latestS, endT - PEAK_T);
      }
      const where = `σ ${sigmaMv} mV, samples every ${dtS} s`;
      assert.equal(falseEnds, 0, `${where}: ${falseEnds} of ${seeds} charges ended before the peak`);
      assert.equal(missed, 0, `${where}: ${missed} of ${seeds} charges never ended`);
      // The true end is found within 20 min of the peak (the drop then passes 10 mV per cell).
      assert.ok(latestS <= 1200, `${where}: ended ${latestS} s after the peak`);
    }
  }
});
