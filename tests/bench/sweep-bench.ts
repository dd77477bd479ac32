/**
 * Benchmark of the sweep engine on the simulator's sweeps (invented demo panel): time of the
 * whole analysis of one sweep and of a four-hour run with three sweeps, against a baseline
 * measured in the same run (one pass of the run engine over the same samples); and how long the
 * backend's event loop is held up by one live analysis, in this thread against the worker
 * thread the app uses (main/app/sweep-analyst.ts). Prints figures; asserts nothing.
 */
import { performance } from 'node:perf_hooks';
import { analyseSweep } from '@shared/engine/sweep';
import { fitSingleDiode } from '@shared/engine/sweep/fit-diode';
import { fitSmooth } from '@shared/engine/sweep/fit-smooth';
import { pointsFromSamples } from '@shared/engine/sweep/points';
import { createRunEngine } from '@shared/engine/run-engine';
import { simulateSweep } from '../unit/sweep-sim';
import { join } from 'node:path';
import { SweepAnalyst, sweepWorkerEntry } from '../../main/app/sweep-analyst';
import { projectRoot } from './bundle-bench';
import { runSweepJob, type SweepJob } from '../../main/app/sweep-job';

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

/** Longest gap between 1 ms timer turns while `work` runs: how long the loop was held up. */
async function longestStallMs(work: () => Promise<unknown>): Promise<number> {
  let last = performance.now();
  let worst = 0;
  const timer = setInterval(() => {
    const now = performance.now();
    worst = Math.max(worst, now - last);
    last = now;
  }, 1);
  await new Promise((r) => setTimeout(r, 5));
  last = performance.now();
  await work();
  worst = Math.max(worst, performance.now() - last);
  clearInterval(timer);
  return worst;
}

async function loopStalls(): Promise<void> {
  const run = simulateSweep('sweep-day');
  const s = run.samples;
  const job: SweepJob = {
    tS: Float64Array.from(s, (x) => x.t),
    vinV: Float64Array.from(s, (x) => x.vinV ?? NaN),
    iinA: Float64Array.from(s, (x) => x.iinA ?? NaN),
    tpanelC: Float64Array.from(s, (x) => (typeof x.extra.tpanel === 'number' ? x.extra.tpanel : NaN)),
    options: { setpointV: run.profile.inputSetpointV, panelTempCoeffPctPerC: -0.36 },
  };
  // This file runs bundled in .bench/: the app's worker is the built one (or its source).
  const root = projectRoot();
  const analyst = new SweepAnalyst(
    sweepWorkerEntry(join(root, 'dist')) ?? sweepWorkerEntry(join(root, 'main', 'app')),
  );
  await analyst.analyse(job); // start the worker and warm both up
  if (!analyst.threaded) console.log('  (no worker entry found: both figures are in this thread)');
  const here: number[] = [];
  const worker: number[] = [];
  for (let r = 0; r < 3; r++) {
    here.push(await longestStallMs(async () => runSweepJob(job)));
    worker.push(await longestStallMs(() => analyst.analyse(job)));
  }
  analyst.close();
  const med = (xs: number[]) => [...xs].sort((a, b) => a - b)[1];
  console.log(
    `live analysis of sweep-day: event loop held up ${med(here).toFixed(0)} ms in this thread (baseline), ` +
      `${med(worker).toFixed(1)} ms with the worker thread (${(med(here) / Math.max(med(worker), 0.1)).toFixed(0)}x less; medians of 3)`,
  );
}

void loopStalls();
