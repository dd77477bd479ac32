/**
 * Benchmark: how long the board checks take on a run as long as the live history keeps (7 days
 * at 1 Hz, about 600,000 samples), against a baseline measured in the same run: one pass that
 * only sums the current of every sample. The live checks are recomputed at most every 5 s,
 * stretched to 50 times their own time, so this figure says how often a week-long run is
 * judged. Prints figures; asserts nothing about speed.
 * Run: node --import tsx tests/bench/checks-bench.ts [--quick]
 */
import { performance } from 'node:perf_hooks';
import { profileFromChemistry } from '@shared/chemistry/profile';
import { runChecks } from '@shared/engine/checks';
import { createRunEngine } from '@shared/engine/run-engine';
import type { EngineEvent } from '@shared/engine/types';
import { ccCvCharge } from '../unit/engine-synthetic';

const quick = process.argv.includes('--quick');
const durationS = quick ? 24 * 3600 : 7 * 24 * 3600;
// Invented demo pack: a 3S 50 Ah Li-ion pack charged at 1 A for a week, so cc lasts for days.
const profile = profileFromChemistry('li-ion', 3, {
  capacityAh: 50,
  chargeCurrentA: 1,
  terminationA: 0.1,
  expect: {
    chargeCurrentA: [0.9, 1.1],
    regulationV: [12.47, 12.73],
    terminationA: [0.085, 0.115],
    efficiency: [0.8, 0.98],
    tempRiseC: [0, 15],
    chargeTimeMin: [60, 20000],
  },
});
const samples = ccCvCharge({
  cells: 3,
  capacityAh: 50,
  setA: 1,
  terminationA: 0.1,
  regulationVPerCell: 4.2,
  ocvEmptyV: 3.0,
  ocvFullV: 4.2,
  startSocPct: 5,
  packOhm: 0.3,
  dtS: 1,
  durationS,
  vNoiseV: 0.004,
  iNoiseA: 0.004,
  tempC: 25,
  vinV: 15,
  pins: true,
});
for (const s of samples) s.iinA = ((s.vbatV ?? 0) * (s.ibatA ?? 0)) / 0.9 / 15;
const engine = createRunEngine(profile);
const events: EngineEvent[] = [];
for (const s of samples) events.push(...engine.push(s));

function time(fn: () => unknown, rounds: number): number {
  fn();
  const start = performance.now();
  for (let i = 0; i < rounds; i++) fn();
  return (performance.now() - start) / rounds;
}

const baselineMs = time(() => {
  let sum = 0;
  for (const s of samples) sum += s.ibatA ?? 0;
  return sum;
}, 5);
let verdict = '';
const checksMs = time(() => {
  verdict = runChecks({ profile, samples, events }).verdict;
}, 3);
const rssMb = process.memoryUsage().rss / 2 ** 20;
console.log(
  `checks on ${samples.length} samples (${(durationS / 86400).toFixed(0)} d at 1 Hz, verdict ${verdict}): ` +
    `${checksMs.toFixed(1)} ms; one summing pass ${baselineMs.toFixed(2)} ms (ratio ${(checksMs / baselineMs).toFixed(0)}x); ` +
    `live recompute interval ${Math.max(5000, 50 * checksMs).toFixed(0)} ms; RSS ${rssMb.toFixed(0)} MB`,
);
