/**
 * Replay throughput and memory (figures, not assertions):
 *  (a) bare line splitting of a 1,000,000-line key=value log (the framer alone, and Node's
 *      readline module counting lines, the reference), (b) the full replay pipeline, run
 *      through replay's own loop (main/cli/replay-run.ts: frame, parse, engine, NDJSON events
 *      written to /dev/null), and (b') the same lines pushed as text (the path of live ports),
 *      all measured in this run, with their ratios;
 *  (c) peak resident memory of `taperline replay --events` on a 10,000,000-line file.
 * Usage: node --import tsx tests/bench/replay-bench.ts [--quick]   (--quick skips (c))
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
import { createInterface } from 'node:readline';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import { LineFramer } from '@shared/telemetry/framer';
import { streamTelemetryLines } from '../../main/cli/read-lines';
import { openLineInput } from '../../main/cli/line-input';
import { EventSink, replayInto } from '../../main/cli/replay-run';
import { getScenario, simulatedLines } from '../../main/simulator';

const root = join(__dirname, '..', '..');
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

/** `taperline replay FILE --events` in-process: replay's own loop, output to /dev/null. */
async function replayPath(path: string, profileJson: unknown): Promise<number> {
  const parsed = parseProfile(profileJson);
  if (!parsed.ok) throw new Error(parsed.error);
  const fd = openSync('/dev/null', 'w');
  const sink = new EventSink(true, (text) => writeSync(fd, text));
  let lines = 0;
  const input = openLineInput(path, {});
  const counted = {
    ...input,
    forEachBytes: (onLine: Parameters<NonNullable<typeof input.forEachBytes>>[0]) =>
      (input.forEachBytes as NonNullable<typeof input.forEachBytes>)((bytes, from, to, rxS, tooLong) => {
        lines++;
        onLine(bytes, from, to, rxS, tooLong);
      }),
  };
  await replayInto(counted, parsed.profile, sink, { speed: 'max' });
  closeSync(fd);
  return lines;
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

async function measure(label: string, runs: number, fn: () => Promise<number>): Promise<number> {
  const rates: number[] = [];
  for (let i = 0; i < runs; i++) {
    const started = performance.now();
    const lines = await fn();
    const seconds = (performance.now() - started) / 1000;
    rates.push(lines / seconds);
  }
  rates.sort((a, b) => a - b);
  const median = rates[Math.floor(rates.length / 2)];
  console.log(`  ${label.padEnd(44)} ${(median / 1e6).toFixed(2).padStart(6)} M lines/s (median of ${runs})`);
  return median;
}

/** Peak RSS of a child replaying `path`, read from /proc while it runs (VmHWM is the high-water mark). */
async function peakRssOfReplay(
  path: string,
  profilePath: string,
): Promise<{ peakMb: number; seconds: number; code: number | null }> {
  const started = performance.now();
  const child = spawn(
    process.execPath,
    [join(root, 'bin', 'taperline.cjs'), 'replay', path, '--profile', profilePath, '--events'],
    {
      stdio: ['ignore', openSync('/dev/null', 'w'), 'inherit'],
    },
  );
  let peakKb = 0;
  const poll = setInterval(() => {
    try {
      const status = readFileSync(`/proc/${child.pid}/status`, 'utf8');
      const match = /VmHWM:\s+(\d+) kB/.exec(status);
      if (match) peakKb = Math.max(peakKb, Number(match[1]));
    } catch {
      /* the child has just exited */
    }
  }, 50);
  const code = await new Promise<number | null>((resolve) => child.on('exit', resolve));
  clearInterval(poll);
  return { peakMb: peakKb / 1024, seconds: (performance.now() - started) / 1000, code };
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
  await textPipeline(log1m, profileJson);
  const framer = await measure('(a) bare splitting: LineFramer', 5, () => framerOnly(log1m));
  const readline = await measure("(a') bare splitting: node:readline (reference)", 3, () =>
    readlineOnly(log1m),
  );
  const pipeline = await measure('(b) replay --events: frame+parse+engine+NDJSON', 5, () =>
    replayPath(log1m, profileJson),
  );
  const text = await measure("(b') the same lines pushed as text", 3, () => textPipeline(log1m, profileJson));
  console.log(`  ratio replay / LineFramer splitting: ${(pipeline / framer).toFixed(2)}`);
  console.log(`  ratio text path / node:readline: ${(text / readline).toFixed(2)}`);
  console.log(
    `  ratio replay / node:readline: ${(pipeline / readline).toFixed(2)} (target >= 1.00: ${pipeline >= readline ? 'met' : 'NOT met'})`,
  );

  if (quick) return;
  const log10m = join(benchDir, 'replay-10m.log');
  console.log(
    'replay benchmark: writing a 10,000,000-line log (the 1 M log ten times, about 0.9 GB) for the memory check...',
  );
  await repeatLog(log1m, log10m, 10);
  const rss = await peakRssOfReplay(log10m, profilePath);
  console.log(
    `  (c) taperline replay --events on 10,000,000 lines: peak RSS ${rss.peakMb.toFixed(1)} MB ` +
      `(target < 150 MB), ${rss.seconds.toFixed(1)} s wall, ${(10 / rss.seconds).toFixed(2)} M lines/s, exit ${rss.code}`,
  );
}

main().catch((err: unknown) => {
  console.error(err);
  process.exitCode = 1;
});
