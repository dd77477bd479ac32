/**
 * One analysis of a station's live sweep, as plain data that crosses a thread: the kept
 * source samples in columns and the profile's options in, the engine's report out. Run the
 * same way in the analysis worker (./sweep-worker.ts) and, where no worker can start, here.
 */
import { analyseSweep, type SweepOptions, type SweepReport } from '@shared/engine/sweep';
import type { TimedSample } from '@shared/engine/types';

export interface SweepJob {
  tS: Float64Array;
  vinV: Float64Array;
  iinA: Float64Array;
  /** Panel temperature; NaN where the sample carried none. */
  tpanelC: Float64Array;
  options: SweepOptions;
}

export function runSweepJob(job: SweepJob): SweepReport {
  const samples: TimedSample[] = Array.from(job.tS, (t, k) => {
    const tp = job.tpanelC[k];
    return {
      t,
      rxS: t,
      vinV: job.vinV[k],
      iinA: job.iinA[k],
      extra: (tp === tp ? { tpanel: tp } : {}) as Record<string, number>,
    };
  });
  return analyseSweep(samples, job.options);
}
