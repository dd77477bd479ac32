/**
 * `taperline simulate`: the built-in simulated charger. Writes a scenario's telemetry lines
 * to standard output or a file as fast as they can be computed, or plays them on the wall
 * clock (with time compression) to a serial device or a pty pair it makes with socat.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream, existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Writable } from 'node:stream';
import type { Command } from 'commander';
import { SerialPort } from 'serialport';
import { LineFramer } from '@shared/telemetry/framer';
import type { LineShape } from '@shared/telemetry/format-line';
import {
  createSimulatorSource,
  getScenario,
  listScenarios,
  simulatedLines,
  SCENARIO_NAMES,
} from '../simulator';
import type { LineSource } from '../sources/types';
import { UsageError } from './errors';
import { nonNegativeNumber, positiveNumber, wholeNumber } from './options';

interface SimulateOptions {
  scenario: string;
  shape: string;
  interval: string;
  duration?: string;
  checksum?: boolean;
  ntc?: boolean;
  seed: string;
  out?: string;
  pty?: boolean;
  device?: string;
  speedup: string;
  realtime?: boolean;
  profileOut?: string;
  list?: boolean;
}

const SHAPES: readonly LineShape[] = ['kv', 'csv', 'json'];
/** Lines written to a file or pipe per chunk. */
const CHUNK_LINES = 2000;

export function registerSimulate(program: Command): void {
  program
    .command('simulate')
    .description(
      'Run the built-in simulated charger (invented demo scenarios) and print its telemetry lines.',
    )
    .option('--scenario <name>', 'which scenario (see --list)', 'bench-liion-3s')
    .option('--shape <kv|csv|json>', 'line shape', 'kv')
    .option('--interval <seconds>', 'seconds between samples', '1')
    .option('--duration <seconds>', 'simulated seconds to produce (default: the whole scenario)')
    .option('--checksum', 'end every telemetry line with a *HH checksum')
    .option('--ntc', 'print raw thermistor counts (ntc) instead of temp')
    .option('--seed <n>', 'seed of the measurement noise, clouds and connection faults', '1')
    .option('--out <file>', 'write the lines to this file instead of standard output')
    .option('--pty', 'make a pty pair with socat, print the path to open, and stream to it until Ctrl-C')
    .option('--device <path>', 'stream in real time to this serial device (e.g. one end of a socat pty pair)')
    .option('--speedup <n>', 'simulated seconds per real second when streaming in real time', '1')
    .option('--realtime', 'pace output to standard output or --out on the wall clock (with --speedup)')
    .option('--profile-out <file>', "also write the scenario's profile JSON to this file")
    .option('--list', 'list the scenarios with a one-line description')
    .action(async (options: SimulateOptions) => {
      await simulate(options);
    });
}

interface Plan {
  scenario: string;
  shape: LineShape;
  sampleIntervalS: number;
  durationS: number | undefined;
  checksum: boolean;
  ntc: boolean | undefined;
  seed: number;
  speedup: number;
}

function planFrom(o: SimulateOptions): Plan {
  if (!SCENARIO_NAMES.includes(o.scenario)) {
    throw new UsageError(`unknown scenario "${o.scenario}"; valid scenarios: ${SCENARIO_NAMES.join(', ')}`);
  }
  if (!SHAPES.includes(o.shape as LineShape))
    throw new UsageError(`--shape must be one of ${SHAPES.join(', ')} (got "${o.shape}")`);
  const seed = wholeNumber('--seed', o.seed);
  const targets = [o.out !== undefined, o.pty === true, o.device !== undefined].filter(Boolean).length;
  if (targets > 1) throw new UsageError('choose one of --out, --pty and --device');
  return {
    scenario: o.scenario,
    shape: o.shape as LineShape,
    sampleIntervalS: positiveNumber('--interval', o.interval, 'seconds'),
    durationS: o.duration === undefined ? undefined : nonNegativeNumber('--duration', o.duration, 'seconds'),
    checksum: o.checksum === true,
    ntc: o.ntc === true ? true : undefined,
    seed,
    speedup: positiveNumber('--speedup', o.speedup),
  };
}

async function simulate(o: SimulateOptions): Promise<void> {
  if (o.list) {
    for (const s of listScenarios()) process.stdout.write(`${s.name.padEnd(20)} ${s.description}\n`);
    return;
  }
  const plan = planFrom(o);
  if (o.profileOut !== undefined) writeProfile(o.profileOut, plan.scenario);
  if (o.pty) return streamToPty(plan);
  if (o.device !== undefined) return streamToDevice(plan, o.device);
  const out: Writable = o.out !== undefined ? createWriteStream(o.out) : process.stdout;
  const opened = o.out !== undefined ? waitOpen(out, o.out) : Promise.resolve();
  await opened;
  try {
    if (o.realtime) await streamToWritable(plan, out);
    else await writeAll(plan, out);
  } catch (err) {
    // The reader went away (`| head`): that is the end of the output, not an error.
    if ((err as NodeJS.ErrnoException).code !== 'EPIPE') throw err;
  }
  if (o.out !== undefined) await closeWritable(out);
}

function writeProfile(path: string, scenario: string): void {
  try {
    writeFileSync(path, `${JSON.stringify(getScenario(scenario).profile, null, 2)}\n`);
    process.stderr.write(
      `taperline: wrote the demo profile of "${scenario}" to ${path}. Its limits are invented for the simulator: ` +
        "for a real pack take them from the cell maker's datasheet (lithium and lead-acid charging can start fires).\n",
    );
  } catch (err) {
    throw new UsageError(
      `cannot write the profile to ${path}: ${(err as Error).message}; nothing was simulated`,
    );
  }
}

function waitOpen(stream: Writable, path: string): Promise<void> {
  return new Promise((resolve, reject) => {
    stream.once('open', () => resolve());
    stream.once('error', (err) => reject(new UsageError(`cannot write ${path}: ${err.message}`)));
  });
}

function closeWritable(stream: Writable): Promise<void> {
  return new Promise((resolve, reject) => {
    stream.end(() => resolve());
    stream.once('error', reject);
  });
}

function write(stream: Writable, text: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const onError = (err: Error): void => reject(err);
    stream.once('error', onError);
    const ok = stream.write(text, () => stream.off('error', onError));
    if (ok) resolve();
    else stream.once('drain', () => resolve());
  });
}

/** The whole scenario as fast as it can be computed, in chunks that respect back-pressure. */
async function writeAll(plan: Plan, out: Writable): Promise<void> {
  const lines = simulatedLines(plan.scenario, plan);
  let chunk: string[] = [];
  for (const line of lines) {
    chunk.push(line);
    if (chunk.length >= CHUNK_LINES) {
      await write(out, `${chunk.join('\n')}\n`);
      chunk = [];
    }
  }
  if (chunk.length > 0) await write(out, `${chunk.join('\n')}\n`);
}

/** Plays the source until it ends or the user presses Ctrl-C. */
function runSource(
  source: LineSource,
  onLine: (text: string) => void,
  onStop: () => Promise<void> | void = () => {},
): Promise<void> {
  return new Promise((resolve) => {
    let ending = false;
    const end = async (): Promise<void> => {
      if (ending) return;
      ending = true;
      process.off('SIGINT', end);
      process.off('SIGTERM', end);
      await source.stop();
      await onStop();
      resolve();
    };
    source.on('line', (l) => onLine(l.text));
    source.on('status', (s) => {
      if (s.state === 'closed') void end();
    });
    process.on('SIGINT', end);
    process.on('SIGTERM', end);
    source.start();
  });
}

function sourceFor(plan: Plan): LineSource {
  return createSimulatorSource(plan.scenario, plan);
}

async function streamToWritable(plan: Plan, out: Writable): Promise<void> {
  await runSource(sourceFor(plan), (text) => {
    out.write(`${text}\n`);
  });
}

function openPort(path: string): Promise<SerialPort> {
  return new Promise((resolve, reject) => {
    const port = new SerialPort({ path, baudRate: 115200, autoOpen: false });
    port.open((err) => {
      if (err)
        reject(
          new UsageError(
            `cannot open ${path}: ${err.message}; check the path and that nothing else holds it`,
          ),
        );
      else resolve(port);
    });
  });
}

function closePort(port: SerialPort): Promise<void> {
  return new Promise((resolve) => {
    if (!port.isOpen) return resolve();
    port.close(() => resolve());
  });
}

/** Streams to a serial device and answers the commands the other side sends. */
async function streamToDevice(plan: Plan, path: string, onStop: () => void = () => {}): Promise<void> {
  const port = await openPort(path);
  const source = sourceFor(plan);
  const framer = new LineFramer((text) => {
    if (text.trim().length > 0) void source.send?.(text, '');
  });
  port.on('data', (chunk: Buffer) => framer.push(chunk));
  port.on('error', (err) => process.stderr.write(`taperline: ${path}: ${err.message}\n`));
  process.stderr.write(
    `taperline: simulating "${plan.scenario}" on ${path} at ${plan.speedup}x; Ctrl-C stops\n`,
  );
  await runSource(
    source,
    (text) => {
      port.write(`${text}\n`);
    },
    async () => {
      await new Promise<void>((resolve) => port.drain(() => resolve()));
      await closePort(port);
      onStop();
    },
  );
}

/** Makes a pty pair with socat; resolves with the two link paths once they exist. */
function startSocat(dir: string): Promise<{ child: ChildProcess; userPath: string; simPath: string }> {
  const userPath = join(dir, 'charger');
  const simPath = join(dir, 'simulator');
  return new Promise((resolve, reject) => {
    const child = spawn('socat', [`pty,raw,echo=0,link=${userPath}`, `pty,raw,echo=0,link=${simPath}`], {
      stdio: 'ignore',
    });
    let settled = false;
    const fail = (err: UsageError): void => {
      if (settled) return;
      settled = true;
      clearInterval(poll);
      reject(err);
    };
    child.once('error', (err: NodeJS.ErrnoException) => {
      fail(
        err.code === 'ENOENT'
          ? new UsageError(
              'socat is not installed; install it (e.g. apt install socat) or make a pty pair yourself and use --device PATH',
            )
          : new UsageError(`cannot start socat: ${err.message}`),
      );
    });
    child.once('exit', (code) =>
      fail(new UsageError(`socat exited (code ${String(code)}) before the pty pair was ready`)),
    );
    const started = Date.now();
    const poll = setInterval(() => {
      if (existsSync(userPath) && existsSync(simPath)) {
        settled = true;
        clearInterval(poll);
        resolve({ child, userPath, simPath });
      } else if (Date.now() - started > 5000) {
        child.kill();
        fail(new UsageError('socat did not create the pty pair within 5 s'));
      }
    }, 20);
  });
}

async function streamToPty(plan: Plan): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-sim-'));
  const cleanup = (): void => rmSync(dir, { recursive: true, force: true });
  let socat: Awaited<ReturnType<typeof startSocat>>;
  try {
    socat = await startSocat(dir);
  } catch (err) {
    cleanup();
    throw err;
  }
  process.stdout.write(`${socat.userPath}\n`);
  process.stderr.write(
    `taperline: open ${socat.userPath} to read the simulated charger (e.g. taperline record --port ${socat.userPath})\n`,
  );
  try {
    await streamToDevice(plan, socat.simPath);
  } finally {
    socat.child.kill();
    cleanup();
  }
}
