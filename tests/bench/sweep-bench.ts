/**
 * Benchmark of the sweep engine on the simulator's sweeps (invented demo panel): time of the
 * whole analysis of one sweep and of a four-hour run with three sweeps, against a baseline
 * measured in the same run (one pass of the run engine over the same samples). Prints figures;
 * asserts nothing. Run: node --import tsx tests/bench/sweep-bench.ts
 */
import { performance } from 'node:perf_hooks';
import { analyseSweep } from '@shared/engine/sweep';
import { fitSingleDiode } from '@shared/engine/sweep/fit-diode';
import { fitSmooth } from '@shared/engine/sweep/fit-smooth';
import { pointsFromSamples } from '@shared/engine/sweep/points';
import { createRunEngine } from '@shared/engine/run-engine';
import { simulateSweep } from '../unit/sweep-sim';

function timeMs(fn: () => void, rounds = 3): number {
  let best = Infinity;
  for (let k = 0; k < rounds; k++) {
    const t0 = performance.now();
    fn();
    best = Math.min(best, performance.now() - t0);
  }
  return best;
}

for (const name of ['sweep-trimmer', 'sweep-day']) {
  const run = simulateSweep(name);
  const options = { setpointV: run.profile.inputSetpointV, panelTempCoeffPctPerC: -0.36 };
  const baselineMs = timeMs(() => {
    const engine = createRunEngine(run.profile);
    for (const s of run.samples) engine.push(s);
  });
  const analyseMs = timeMs(() => analyseSweep(run.samples, options));
  // 600 points evenly through the run's first sweep (as the analysis thins a long sweep).
  const all = pointsFromSamples(run.samples).filter((p) => p.tS >= 250 && p.tS <= 1400);
  const pts = Array.from({ length: 600 }, (_, k) => all[Math.floor((k * all.length) / 600)]);
  const diodeMs = timeMs(() => fitSingleDiode(pts));
  const smoothMs = timeMs(() => fitSmooth(pts));
  console.log(
    `${name}: ${run.samples.length} samples; run engine pass ${baselineMs.toFixed(1)} ms (baseline); ` +
      `whole sweep analysis ${analyseMs.toFixed(0)} ms = ${(analyseMs / baselineMs).toFixed(0)}x baseline; ` +
      `single-diode fit of 600 points ${diodeMs.toFixed(0)} ms, smooth fit ${smoothMs.toFixed(0)} ms`,
  );
}
