/**
 * Replay throughput and memory (figures, not assertions):
 *  (a) bare line splitting of a 1,000,000-line key=value log (the framer alone, and Node's
 *      readline module counting lines, the reference), (b) the full replay pipeline, run
 *      through replay's own loop (main/cli/replay-run.ts: frame, parse, engine, NDJSON events
 *      written to /dev/null), and (b') the same lines pushed as text (the path of live ports),
 *      all measured in this run, with their ratios;
 *  (c) the commands as a person runs them, start-up included: `taperline replay FILE --events`
 *      against `node -e` counting the same file's lines with readline, side by side on a
 *      10,000,000-line file (the 1 M file with --quick), with the peak resident memory of each;
 *  (d) where replay's time goes: the same lines held in memory and run through framing alone,
 *      the parser alone, and parser + pipeline (plausibility, time base, engine), as CPU
 *      nanoseconds per line beside replay's and readline's own.
 * `npm run bench` runs this file bundled like the shipped CLI (./bundle-bench.ts).
 * By hand: node --import tsx tests/bench/run-one.ts replay-bench [--quick]
 */
import { spawn } from 'node:child_process';
import {
  createReadStream,
  createWriteStream,
  existsSync,
  mkdirSync,
  closeSync,
  openSync,
  readFileSync,
  statSync,
  writeFileSync,
  writeSync,
} from 'node:fs';
import { join } from 'node:path';
import { projectRoot } from './bundle-bench';
import { createInterface } from 'node:readline';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import { createLineParser } from '@shared/telemetry/parse-line';
import { LineFramer } from '@shared/telemetry/framer';
import { streamTelemetryLines } from '../../main/cli/read-lines';
import { openLineInput } from '../../main/cli/line-input';
import { EventSink, replayInto } from '../../main/cli/replay-run';
import { getScenario, simulatedLines } from '../../main/simulator';

const root = projectRoot();
const benchDir = join(root, '.bench');
const SCENARIO = 'bench-liion-3s';

async function writeLog(path: string, lineCount: number): Promise<void> {
  if (existsSync(path) && countLinesQuick(path) === lineCount) return;
  const out = createWriteStream(path);
  // The scenario's 9,000 s charge, sampled densely enough to give lineCount lines per pass.
  const sampleIntervalS = 9000 / lineCount;
  let written = 0;
  let buffer = '';
  while (written < lineCount) {
    for (const line of simulatedLines(SCENARIO, { shape: 'kv', sampleIntervalS, seed: written + 1 })) {
      if (line.startsWith('#')) continue;
      buffer += line + '\n';
      if (++written === lineCount) break;
      if (buffer.length > 1 << 20) {
        if (!out.write(buffer)) await new Promise<void>((resolve) => out.once('drain', () => resolve()));
        buffer = '';
      }
    }
  }
  out.write(buffer);
  await new Promise<void>((resolve, reject) =>
    out.end((err?: Error | null) => (err ? reject(err) : resolve())),
  );
  writeFileSync(path + '.count', String(lineCount));
}

function countLinesQuick(path: string): number {
  try {
    return Number(readFileSync(path + '.count', 'utf8'));
  } catch {
    return -1;
  }
}

/** Ten charges back to back: the device clock restarts each time, as after a reboot. */
async function repeatLog(from: string, to: string, times: number): Promise<void> {
  const out = createWriteStream(to);
  for (let i = 0; i < times; i++) {
    for await (const chunk of createReadStream(from, { highWaterMark: 1 << 20 })) {
      if (!out.write(chunk)) await new Promise<void>((resolve) => out.once('drain', () => resolve()));
    }
  }
  await new Promise<void>((resolve, reject) =>
    out.end((err?: Error | null) => (err ? reject(err) : resolve())),
  );
}

async function framerOnly(path: string): Promise<number> {
  let lines = 0;
  const framer = new LineFramer(() => {
    lines++;
  });
  for await (const chunk of createReadStream(path, { highWaterMark: 1 << 20 })) framer.push(chunk as Buffer);
  framer.end();
  return lines;
}

async function readlineOnly(path: string): Promise<number> {
  let lines = 0;
  const rl = createInterface({
    input: createReadStream(path, { highWaterMark: 1 << 20 }),
    crlfDelay: Infinity,
  });
  for await (const _line of rl) lines++;
  return lines;
}

/**
 * `taperline replay FILE --events` in-process: replay's own loop, output to /dev/null. The
 * lines are counted from the summary replay writes last, not by wrapping its loop.
 */
async function replayPath(path: string, profileJson: unknown): Promise<number> {
  const parsed = parseProfile(profileJson);
  if (!parsed.ok) throw new Error(parsed.error);
  const fd = openSync('/dev/null', 'w');
  let last = '';
  const sink = new EventSink(true, (text) => {
    last = text;
    writeSync(fd, text);
  });
  await replayInto(openLineInput(path, {}), parsed.profile, sink, { speed: 'max' });
  closeSync(fd);
  const summary = JSON.parse(last.trimEnd().split('\n').at(-1) as string) as { lines: number };
  return summary.lines;
}

async function textPipeline(path: string, profileJson: unknown): Promise<number> {
  const parsed = parseProfile(profileJson);
  if (!parsed.ok) throw new Error(parsed.error);
  const pipeline = createPipeline(parsed.profile);
  const sink = createWriteStream('/dev/null');
  let out = '';
  const lines = await streamTelemetryLines(path, (text, rxS, tooLong) => {
    const outcome = pipeline.pushLine(text, rxS, tooLong);
    for (const event of outcome.events) out += JSON.stringify(event) + '\n';
  });
  sink.write(out + JSON.stringify({ type: 'summary', ...pipeline.summary() }) + '\n');
  await new Promise<void>((resolve) => sink.end(() => resolve()));
  return lines;
}

/** The 1 M log in memory with its line boundaries, for the per-stage figures (d). */
interface HeldLog {
  bytes: Buffer;
  from: Int32Array;
  to: Int32Array;
}

function holdLog(path: string): HeldLog {
  const bytes = readFileSync(path);
  const from: number[] = [];
  const to: number[] = [];
  const framer = LineFramer.ofBytes((_b, f, t) => {
    from.push(f);
    to.push(t);
  });
  framer.push(bytes);
  framer.end();
  return { bytes, from: Int32Array.from(from), to: Int32Array.from(to) };
}

async function stageFraming(log: HeldLog): Promise<number> {
  let lines = 0;
  const framer = LineFramer.ofBytes(() => {
    lines++;
  });
  framer.push(log.bytes);
  framer.end();
  return lines;
}

async function stageParse(log: HeldLog, profileJson: unknown): Promise<number> {
  const parsed = parseProfile(profileJson);
  if (!parsed.ok) throw new Error(parsed.error);
  const parser = createLineParser({ fields: parsed.profile.fields, thermistor: parsed.profile.thermistor });
  const { bytes, from, to } = log;
  let samples = 0;
  for (let i = 0; i < from.length; i++)
    if (parser.parseBytes(bytes, from[i], to[i], i).kind === 'sample') samples++;
  if (samples === 0) throw new Error('the parser read no sample');
  return from.length;
}

async function stagePipeline(log: HeldLog, profileJson: unknown): Promise<number> {
  const parsed = parseProfile(profileJson);
  if (!parsed.ok) throw new Error(parsed.error);
  const pipeline = createPipeline(parsed.profile);
  const { bytes, from, to } = log;
  let events = 0;
  for (let i = 0; i < from.length; i++) events += pipeline.pushBytes(bytes, from[i], to[i], i).events.length;
  if (events === 0) throw new Error('the pipeline gave no event');
  return from.length;
}

interface Rate {
  wall: number;
  cpu: number;
}

/** One timed run: lines per second of wall time and of this process's CPU time. */
async function timed(fn: () => Promise<number>): Promise<Rate> {
  const started = performance.now();
  const cpu0 = process.cpuUsage();
  const lines = await fn();
  const cpu = process.cpuUsage(cpu0);
  const seconds = (performance.now() - started) / 1000;
  return { wall: lines / seconds, cpu: lines / ((cpu.user + cpu.system) / 1e6) };
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

/**
 * Runs the contestants in interleaved rounds (a, b, c, a, b, c, ...) so that a burst of load
 * from other processes on a shared machine falls on all of them alike, and prints medians.
 */
async function compare(
  rounds: number,
  contestants: [label: string, fn: () => Promise<number>][],
): Promise<Map<string, Rate>> {
  const rates = new Map<string, Rate[]>(contestants.map(([label]) => [label, []]));
  for (let r = 0; r < rounds; r++) {
    for (const [label, fn] of contestants) (rates.get(label) as Rate[]).push(await timed(fn));
  }
  const result = new Map<string, Rate>();
  for (const [label, list] of rates) {
    const m = { wall: median(list.map((x) => x.wall)), cpu: median(list.map((x) => x.cpu)) };
    result.set(label, m);
    console.log(
      `  ${label.padEnd(48)} ${(m.wall / 1e6).toFixed(2).padStart(5)} M lines/s wall, ` +
        `${(m.cpu / 1e6).toFixed(2).padStart(5)} M lines/s CPU (median of ${rounds})`,
    );
  }
  return result;
}

function ratio(label: string, a: Rate, b: Rate, target?: number): void {
  const wall = a.wall / b.wall;
  const cpu = a.cpu / b.cpu;
  const verdict =
    target === undefined ? '' : ` (target >= ${target.toFixed(2)}: ${wall >= target ? 'met' : 'NOT met'})`;
  console.log(`  ratio ${label}: ${wall.toFixed(2)} wall, ${cpu.toFixed(2)} CPU${verdict}`);
}

/** The reference as a command of its own: node:readline counting a file's lines. */
const READLINE_COUNT = [
  '-e',
  "const rl = require('node:readline').createInterface({ input: require('node:fs').createReadStream(process.argv[1], { highWaterMark: 1 << 20 }), crlfDelay: Infinity });" +
    " let n = 0; rl.on('line', () => n++); rl.on('close', () => console.log(n));",
];

interface ChildRun {
  seconds: number;
  cpuS: number;
  peakMb: number;
  code: number | null;
}

/**
 * A child process run to its end: wall seconds, CPU seconds (from /proc, user + system)
 * and peak RSS (VmHWM, the kernel's high-water mark), read while it runs.
 */
async function runChild(args: string[]): Promise<ChildRun> {
  const started = performance.now();
  const child = spawn(process.execPath, args, { stdio: ['ignore', openSync('/dev/null', 'w'), 'inherit'] });
  let peakKb = 0;
  let cpuTicks = 0;
  const ticksPerS = 100; // USER_HZ on Linux
  const poll = setInterval(() => {
    try {
      const status = readFileSync(`/proc/${child.pid}/status`, 'utf8');
      const match = /VmHWM:\s+(\d+) kB/.exec(status);
      if (match) peakKb = Math.max(peakKb, Number(match[1]));
      const stat = readFileSync(`/proc/${child.pid}/stat`, 'utf8');
      const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
      cpuTicks = Number(fields[11]) + Number(fields[12]); // utime + stime
    } catch {
      /* the child has just exited */
    }
  }, 20);
  const code = await new Promise<number | null>((resolve) => child.on('exit', resolve));
  clearInterval(poll);
  return {
    seconds: (performance.now() - started) / 1000,
    cpuS: cpuTicks / ticksPerS,
    peakMb: peakKb / 1024,
    code,
  };
}

/**
 * (c) The commands as a person runs them, start-up and cold compiler included: `taperline
 * replay FILE --events` against a readline line count of the same file, in interleaved
 * rounds, with the peak memory of each.
 */
async function commandsSideBySide(path: string, lineCount: number, profilePath: string, rounds: number) {
  const replayArgs = [
    join(root, 'bin', 'taperline.cjs'),
    'replay',
    path,
    '--profile',
    profilePath,
    '--events',
  ];
  const replays: ChildRun[] = [];
  const counts: ChildRun[] = [];
  for (let r = 0; r < rounds; r++) {
    counts.push(await runChild([...READLINE_COUNT, path]));
    replays.push(await runChild(replayArgs));
  }
  const show = (label: string, runs: ChildRun[]) => {
    const wallS = median(runs.map((x) => x.seconds));
    const peakMb = Math.max(...runs.map((x) => x.peakMb));
    console.log(
      `  ${label.padEnd(48)} ${(lineCount / wallS / 1e6).toFixed(2).padStart(5)} M lines/s wall ` +
        `(${wallS.toFixed(2)} s, median of ${rounds}), peak RSS ${peakMb.toFixed(1)} MB, exit ${runs.map((x) => x.code).join('/')}`,
    );
    return { wallS, peakMb };
  };
  const count = show('(c) node -e readline line count (reference)', counts);
  const replay = show('(c) taperline replay FILE --events', replays);
  console.log(
    `  ratio taperline replay / readline command: ${(count.wallS / replay.wallS).toFixed(2)} wall; ` +
      `replay peak RSS ${replay.peakMb.toFixed(1)} MB (target < 150 MB: ${replay.peakMb < 150 ? 'met' : 'NOT met'})`,
  );
}

async function main(): Promise<void> {
  const quick = process.argv.includes('--quick');
  mkdirSync(benchDir, { recursive: true });
  const profileJson = getScenario(SCENARIO).profile;
  const profilePath = join(benchDir, 'bench-profile.json');
  writeFileSync(profilePath, JSON.stringify(profileJson));

  const log1m = join(benchDir, 'replay-1m.log');
  console.log('replay benchmark: generating a 1,000,000-line key=value log with the simulator...');
  await writeLog(log1m, 1_000_000);
  console.log(`  file: ${log1m} (${(statSync(log1m).size / 1e6).toFixed(1)} MB)`);

  await replayPath(log1m, profileJson); // warm-up of the JIT for every step
  const FRAMER = '(a) bare splitting: LineFramer';
  const READLINE = "(a') node:readline counting lines (reference)";
  const REPLAY = '(b) replay --events: frame+parse+engine+NDJSON';
  const TEXT = "(b') the same lines pushed as text";
  const rates = await compare(5, [
    [FRAMER, () => framerOnly(log1m)],
    [READLINE, () => readlineOnly(log1m)],
    [REPLAY, () => replayPath(log1m, profileJson)],
  ]);
  const get = (label: string) => rates.get(label) as Rate;
  ratio('replay / LineFramer splitting', get(REPLAY), get(FRAMER));
  ratio('replay / node:readline', get(REPLAY), get(READLINE), 1);
  // (d) Per stage, in memory (no reading, no output), CPU ns per line; differences are the
  // cost of each stage. Run after (b) so that replay was measured as `taperline replay` runs.
  const held = holdLog(log1m);
  const FRAMING = '(d) in memory: framing';
  const PARSE = '(d) in memory: framing done, parse only';
  const PIPE = '(d) in memory: parse + pipeline (time base, engine)';
  const stages = await compare(5, [
    [FRAMING, () => stageFraming(held)],
    [PARSE, () => stageParse(held, profileJson)],
    [PIPE, () => stagePipeline(held, profileJson)],
  ]);
  const ns = (rate: Rate | undefined) => 1e9 / (rate as Rate).cpu;
  const parseNs = ns(stages.get(PARSE));
  const pipeNs = ns(stages.get(PIPE));
  const replayNs = ns(get(REPLAY));
  console.log(
    `  (d) CPU ns per line: readline ${ns(get(READLINE)).toFixed(0)}; replay ${replayNs.toFixed(0)} = ` +
      `parse ${parseNs.toFixed(0)} + plausibility/time base/engine ${(pipeNs - parseNs).toFixed(0)} + ` +
      `reading, framing and NDJSON out ${(replayNs - pipeNs).toFixed(0)} (framing alone ${ns(stages.get(FRAMING)).toFixed(0)})`,
  );
  // The text path (live ports) last, so that replay is measured as `taperline replay` runs:
  // in a process where only the byte path has run (with both run first, one run under tsx
  // gave replay about 0.6x of this figure; a bundled build did not show it).
  await textPipeline(log1m, profileJson);
  const textRates = await compare(3, [
    [READLINE, () => readlineOnly(log1m)],
    [TEXT, () => textPipeline(log1m, profileJson)],
  ]);
  ratio('text path / node:readline', textRates.get(TEXT) as Rate, textRates.get(READLINE) as Rate);

  if (quick) {
    console.log('replay benchmark: the commands themselves on the 1,000,000-line log (--quick)...');
    await commandsSideBySide(log1m, 1_000_000, profilePath, 3);
    return;
  }
  const log10m = join(benchDir, 'replay-10m.log');
  console.log(
    'replay benchmark: the commands themselves on a 10,000,000-line log (the 1 M log ten times, about 0.9 GB)...',
  );
  if (!existsSync(log10m) || statSync(log10m).size !== statSync(log1m).size * 10)
    await repeatLog(log1m, log10m, 10);
  await commandsSideBySide(log10m, 10_000_000, profilePath, 3);
}

main().catch((err: unknown) => {
  console.error(err);
  process.exitCode = 1;
});
