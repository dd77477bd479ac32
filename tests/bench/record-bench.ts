/**
 * Recorder figures (printed, not asserted):
 *  (a) samples recorded per second into SQLite while replaying at max speed — the station's
 *      own per-line path (pipeline + raw line + sample + events), the pipeline alone, and the
 *      recorder alone on pre-parsed samples;
 *  (b) database size per day of a 1 Hz and a 10 Hz station, extrapolated from a measured hour;
 *  (c) overview time of a 7-day 1 Hz run at 1,000 buckets (and zoomed windows).
 * Usage: node --import tsx tests/bench/record-bench.ts [--quick]   (--quick: a 1-day run for (c))
 */
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import type { TimedSample } from '@shared/engine/types';
import { openRecorder } from '../../main/recorder';
import type { Recorder, RunStart, SeriesField } from '../../main/recorder/types';
import { getScenario, simulatedLines } from '../../main/simulator';
import { toFeedLine } from '../../main/station/feed-line';

const SCENARIO = 'bench-liion-3s';
const quick = process.argv.includes('--quick');
const dir = mkdtempSync(join(tmpdir(), 'taperline-record-bench-'));

function profile() {
  const parsed = parseProfile(getScenario(SCENARIO).profile);
  if (!parsed.ok) throw new Error(parsed.error);
  return parsed.profile;
}

const START: RunStart = {
  stationId: 'bench-1',
  stationLabel: 'bench',
  profileName: 'garden-sensor 3S',
  chemistry: 'li-ion',
  profileJson: getScenario(SCENARIO).profile,
  startRxS: 1_800_000_000,
};

/** Simulated charger lines (sample lines only), `count` of them, sampleIntervalS apart. */
function scenarioLines(count: number, sampleIntervalS: number): string[] {
  const out: string[] = [];
  let seed = 1;
  while (out.length < count) {
    for (const line of simulatedLines(SCENARIO, { shape: 'kv', sampleIntervalS, seed: seed++ })) {
      if (line.startsWith('#')) continue;
      out.push(line);
      if (out.length === count) break;
    }
  }
  return out;
}

/** The station's per-line work (main/station/manager.ts onLine), minus the event emitter. */
function recordLines(rec: Recorder, runId: number, lines: string[], intervalS: number): number {
  const p = createPipeline(profile());
  let samples = 0;
  for (let i = 0; i < lines.length; i++) {
    const rxS = START.startRxS + i * intervalS;
    const out = p.pushLine(lines[i], rxS, false);
    rec.addLine(runId, toFeedLine(lines[i], rxS, out.result));
    if (out.sample) {
      rec.addSample(runId, out.sample);
      samples++;
    }
    for (const e of out.events) rec.addEvent(runId, e);
  }
  rec.endRun(runId, START.startRxS + lines.length * intervalS, 'stopped', p.summary());
  return samples;
}

function fileBytes(path: string): number {
  let total = 0;
  for (const suffix of ['', '-wal']) {
    try {
      total += statSync(path + suffix).size;
    } catch {
      // No WAL after a checkpoint.
    }
  }
  return total;
}

/** A figure only counts when every row reached the file. */
function mustBeHealthy(rec: Recorder): void {
  const h = rec.health();
  if (!h.ok || h.pending > 0 || h.dropped > 0)
    throw new Error(`the recorder did not write everything: ${JSON.stringify(h)}`);
}

const mib = (b: number) => `${(b / 1024 / 1024).toFixed(1)} MiB`;

function throughput(): void {
  const n = quick ? 100_000 : 300_000;
  const lines = scenarioLines(n, 9000 / n);
  const p = createPipeline(profile());
  let t0 = performance.now();
  for (let i = 0; i < lines.length; i++) p.pushLine(lines[i], START.startRxS + i, false);
  const pipelineMs = performance.now() - t0;

  const path = join(dir, 'throughput.sqlite');
  const rec = openRecorder(path);
  const { runId } = rec.startRun(START);
  t0 = performance.now();
  const samples = recordLines(rec, runId, lines, 1);
  rec.flush();
  const fullMs = performance.now() - t0;
  mustBeHealthy(rec);
  rec.close();

  // The recorder alone: samples already parsed, one raw line each.
  const pre: TimedSample[] = [];
  const p2 = createPipeline(profile());
  for (let i = 0; i < lines.length; i++) {
    const s = p2.pushLine(lines[i], START.startRxS + i, false).sample;
    if (s) pre.push(s);
  }
  const rec2 = openRecorder(join(dir, 'recorder-only.sqlite'));
  const run2 = rec2.startRun(START).runId;
  t0 = performance.now();
  for (let i = 0; i < pre.length; i++) {
    rec2.addLine(run2, { rxS: pre[i].rxS, text: lines[i], kind: 'sample' });
    rec2.addSample(run2, pre[i]);
  }
  rec2.flush();
  const recorderMs = performance.now() - t0;
  mustBeHealthy(rec2);
  rec2.close();

  console.log(
    `(a) replay at max speed into SQLite, ${samples.toLocaleString('en')} samples (${SCENARIO}, key=value lines):`,
  );
  console.log(
    `    station path (pipeline + raw line + sample + events): ${Math.round(samples / (fullMs / 1000)).toLocaleString('en')} samples/s (target >= 200,000)`,
  );
  console.log(
    `    pipeline alone:                                      ${Math.round(samples / (pipelineMs / 1000)).toLocaleString('en')} samples/s`,
  );
  console.log(
    `    recorder alone (pre-parsed samples + raw lines):     ${Math.round(pre.length / (recorderMs / 1000)).toLocaleString('en')} samples/s`,
  );
  console.log(`    recording costs ${(fullMs / pipelineMs).toFixed(1)}x the pipeline's time in this run`);
}

function sizePerDay(): void {
  console.log(
    '(b) database size per day (one measured hour x 24; WAL checkpointed; raw lines + samples + rollup):',
  );
  for (const hz of [1, 10]) {
    const n = 3600 * hz;
    const lines = scenarioLines(n, 1 / hz);
    const path = join(dir, `size-${hz}hz.sqlite`);
    const rec = openRecorder(path);
    const empty = fileBytes(path);
    const { runId } = rec.startRun(START);
    recordLines(rec, runId, lines, 1 / hz);
    mustBeHealthy(rec);
    rec.close();
    const hourBytes = fileBytes(path) - empty;
    console.log(
      `    ${String(hz).padStart(2)} Hz station: ${mib(hourBytes)} per hour -> ${mib(hourBytes * 24)} per day (${(hourBytes / n).toFixed(0)} bytes per sample)`,
    );
  }
}

function overviewTiming(): void {
  const days = quick ? 1 : 7;
  const n = days * 86_400;
  const path = join(dir, 'overview.sqlite');
  const rec = openRecorder(path);
  const { runId } = rec.startRun(START);
  // Invented 1 Hz samples for the timing (values do not matter to the query).
  const t0 = performance.now();
  for (let i = 0; i < n; i++) {
    const s: TimedSample = {
      t: i,
      rxS: START.startRxS + i,
      vbatV: 12 + Math.sin(i / 5000),
      ibatA: 1 - i / n,
      tempC: 25 + Math.sin(i / 900),
      vinV: 18,
      iinA: 0.8,
      extra: {},
    };
    rec.addLine(runId, {
      rxS: s.rxS,
      text: `t=${i} vbat=${s.vbatV} ibat=${s.ibatA} temp=${s.tempC} vin=18 iin=0.8`,
      kind: 'sample',
    });
    rec.addSample(runId, s);
  }
  rec.endRun(runId, START.startRxS + n, 'stopped');
  mustBeHealthy(rec);
  const buildS = (performance.now() - t0) / 1000;
  const fields: SeriesField[] = ['vbatV', 'ibatA', 'tempC', 'vinV', 'iinA'];
  const time = (from: number, to: number, buckets: number) => {
    rec.overview(runId, fields, from, to, buckets);
    const runs: number[] = [];
    for (let k = 0; k < 15; k++) {
      const s = performance.now();
      rec.overview(runId, fields, from, to, buckets);
      runs.push(performance.now() - s);
    }
    runs.sort((a, b) => a - b);
    return `median ${runs[7].toFixed(1)} ms, worst ${runs[14].toFixed(1)} ms`;
  };
  console.log(
    `(c) overview of a ${days}-day 1 Hz run (${n.toLocaleString('en')} samples, recorded in ${buildS.toFixed(1)} s, file ${mib(fileBytes(path))}), 5 fields:`,
  );
  console.log(`    whole run, 1,000 buckets: ${time(0, n, 1000)} (target < 50 ms)`);
  console.log(`    one day,   1,000 buckets: ${time(n / 2, n / 2 + 86_400, 1000)}`);
  console.log(`    one hour,  1,000 buckets: ${time(n / 2, n / 2 + 3600, 1000)} (reads the samples)`);
  console.log(`    ten min,   1,000 buckets: ${time(n / 2, n / 2 + 600, 1000)} (reads the samples)`);
  rec.close();
}

try {
  // Shared 2-core machines: the load average says how much of the CPU this run had.
  console.log(
    `taperline record bench (${quick ? 'quick' : 'full'}), node ${process.version}, load average ${loadavg()
      .map((l) => l.toFixed(1))
      .join(' ')}`,
  );
  throughput();
  sizePerDay();
  overviewTiming();
} finally {
  rmSync(dir, { recursive: true, force: true });
}
