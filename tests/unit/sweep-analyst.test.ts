/**
 * The live sweep analysis off the event loop: the worker thread gives the very report the
 * engine gives in this thread, the loop keeps turning while it works, and a worker that dies
 * leaves no analysis unanswered (the job is done here instead).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { SweepAnalyst } from '../../main/app/sweep-analyst';
import { runSweepJob, type SweepJob } from '../../main/app/sweep-job';
import { simulateSweep } from './sweep-sim';

function dayJob(): SweepJob {
  // The simulator's day of sweeps (invented demo panel): the longest analysis the app runs.
  const run = simulateSweep('sweep-day');
  const s = run.samples;
  return {
    tS: Float64Array.from(s, (x) => x.t),
    vinV: Float64Array.from(s, (x) => x.vinV ?? NaN),
    iinA: Float64Array.from(s, (x) => x.iinA ?? NaN),
    tpanelC: Float64Array.from(s, (x) => (typeof x.extra.tpanel === 'number' ? x.extra.tpanel : NaN)),
    options: { setpointV: run.profile.inputSetpointV, panelTempCoeffPctPerC: -0.36 },
  };
}

test('a worker thread gives the report of the engine, and the loop keeps turning meanwhile', async (t) => {
  const analyst = new SweepAnalyst();
  t.after(() => analyst.close());
  const job = dayJob();
  const here = runSweepJob(job);
  assert.ok(here.ok, here.reason ?? '');

  let turns = 0;
  const timer = setInterval(() => turns++, 1);
  const there = await analyst.analyse(job);
  clearInterval(timer);
  assert.equal(analyst.threaded, true, 'the analysis ran in a worker thread');
  assert.deepEqual(there, here);
  // In this thread the whole analysis is one task, so no timer could fire before it returned.
  assert.ok(turns > 0, `timers fired while the worker analysed (${turns})`);
});

test('a worker that dies mid-analysis: the job is answered here, and later ones too', async (t) => {
  const analyst = new SweepAnalyst();
  t.after(() => analyst.close());
  const job = dayJob();
  const pending = analyst.analyse(job);
  assert.equal(analyst.threaded, true);
  await (analyst as unknown as { worker: { terminate(): Promise<number> } }).worker.terminate();
  const report = await pending;
  assert.deepEqual(report, runSweepJob(job));
  assert.equal(analyst.threaded, false);
  assert.deepEqual(await analyst.analyse(job), report);
});

test('a closed analyst refuses new work, and what it held is refused with it', async () => {
  const analyst = new SweepAnalyst();
  const pending = analyst.analyse(dayJob());
  analyst.close();
  await assert.rejects(pending, /closed/);
  await assert.rejects(analyst.analyse(dayJob()), /closed/);
});
