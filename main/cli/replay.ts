/**
 * `taperline replay`: reads recorded or captured telemetry through the same pipeline as a
 * live port and prints the phases, alarms and a summary (NDJSON with --events).
 */
import type { Command } from 'commander';
import { parseProfile } from '../../shared/chemistry/profile';
import type { ResolvedProfile } from '../../shared/chemistry/types';
import { createPipeline, type Pipeline } from '../../shared/engine/pipeline';
import type { EngineEvent, RunSummary } from '../../shared/engine/types';
import { createLineParser } from '../../shared/telemetry/parse-line';
import { UsageError } from './errors';
import { loadProfileFile } from './profile-file';
import { openLineInput, type LineInput } from './line-input';
import { formatEventText, formatSummaryText, summaryRecord } from './replay-format';

interface ReplayOptions {
  profile?: string;
  events?: boolean;
  speed: string;
  db?: string;
  run: string;
  interval: string;
}

export function registerReplay(program: Command): void {
  program
    .command('replay')
    .description('Run a telemetry file (or - for standard input, or a recorded run) through the charge engine.')
    .argument('<file>', 'telemetry file, - for standard input, or a .sqlite recording')
    .option('--profile <file>', 'profile JSON (what is charged and how it reports)')
    .option('--events', 'print NDJSON: one event a line, then a summary line')
    .option('--speed <n|max>', 'replay speed: a multiple of real time, or max', 'max')
    .option('--db <file>', 'read a recorded run from this database instead of FILE')
    .option('--run <id|latest>', 'which recorded run (with a database)', 'latest')
    .option('--interval <seconds>', 'seconds between lines that carry no device time', '1')
    .action(async (file: string, options: ReplayOptions) => {
      await replay(file, options);
    });
}

function parseSpeed(text: string): number | 'max' {
  if (text === 'max') return 'max';
  const speed = Number(text);
  if (!Number.isFinite(speed) || speed <= 0) throw new UsageError(`--speed must be a positive number or max (got "${text}")`);
  return speed;
}

function parseInterval(text: string): number {
  const intervalS = Number(text);
  if (!Number.isFinite(intervalS) || intervalS <= 0) {
    throw new UsageError(`--interval must be a positive number of seconds (got "${text}")`);
  }
  return intervalS;
}

async function replay(file: string, options: ReplayOptions): Promise<void> {
  const speed = parseSpeed(options.speed);
  const intervalS = parseInterval(options.interval);
  const explicitProfile = options.profile ? loadProfileFile(options.profile) : null;
  const input = openLineInput(file, { db: options.db, run: options.run, intervalS });
  const profile = explicitProfile ?? input.profile;
  const sink = new EventSink(options.events === true);
  const run = new ReplayRun(profile, sink);

  if (speed === 'max') {
    await input.forEach((text, rxS, tooLong) => run.push(text, rxS, tooLong));
  } else {
    await pacedReplay(input, run, speed);
  }
  sink.finish(run.summary());
}

/** Replays at `speed` times real time, on the run clock. */
async function pacedReplay(input: LineInput, run: ReplayRun, speed: number): Promise<void> {
  const startedMs = performance.now();
  for await (const line of input.lines()) {
    const t = run.push(line.text, line.rxS, line.tooLong);
    if (t === null) continue;
    const aheadMs = (t / speed) * 1000 - (performance.now() - startedMs);
    if (aheadMs > 1) await new Promise((resolve) => setTimeout(resolve, aheadMs));
  }
}

/**
 * Feeds lines to the pipeline. Without a profile it waits for the first sample and assumes
 * a Li-ion pack whose cell count fits that voltage, saying so on standard error.
 */
class ReplayRun {
  private pipeline: Pipeline | null;
  private pending: { text: string; rxS: number; tooLong: boolean }[] = [];
  private readonly probe = createLineParser({});

  constructor(
    profile: ResolvedProfile | null,
    private readonly sink: EventSink,
  ) {
    this.pipeline = profile ? createPipeline(profile) : null;
  }

  /** Returns the run time of the line's sample, or null when it was not a sample. */
  push(text: string, rxS: number, tooLong: boolean): number | null {
    if (this.pipeline === null) {
      this.pending.push({ text, rxS, tooLong });
      const probe = this.probe.parse(text, rxS, tooLong);
      if (probe.kind !== 'sample' || probe.sample.vbatV === undefined) return null;
      this.pipeline = createPipeline(guessProfile(probe.sample.vbatV));
      const pending = this.pending;
      this.pending = [];
      let t: number | null = null;
      for (const line of pending) t = this.feed(line.text, line.rxS, line.tooLong) ?? t;
      return t;
    }
    return this.feed(text, rxS, tooLong);
  }

  private feed(text: string, rxS: number, tooLong: boolean): number | null {
    const outcome = this.pipeline!.pushLine(text, rxS, tooLong);
    for (const event of outcome.events) this.sink.event(event);
    return outcome.sample ? outcome.sample.t : null;
  }

  summary(): RunSummary {
    if (this.pipeline === null) {
      // No sample at all: still count what was read, through a default pipeline.
      this.pipeline = createPipeline(guessProfile(3.7));
      for (const line of this.pending) this.feed(line.text, line.rxS, line.tooLong);
      this.pending = [];
    }
    return this.pipeline.summary();
  }
}

/** Li-ion nominal 3.7 V per cell ("common practice") gives the cell count of an unknown pack. */
function guessProfile(vbatV: number): ResolvedProfile {
  const cells = Math.min(64, Math.max(1, Math.round(vbatV / 3.7)));
  process.stderr.write(
    `taperline: no --profile given; assuming a ${cells}-cell Li-ion pack from the first pack voltage ` +
      `${vbatV.toFixed(2)} V. Pass --profile for the pack's real limits.\n`,
  );
  const result = parseProfile({ name: `assumed ${cells}S li-ion`, chemistry: 'li-ion', cells });
  if (!result.ok) throw new Error(`default profile refused: ${result.error}`);
  return result.profile;
}

/** Prints events as NDJSON (--events) or as readable lines. */
class EventSink {
  private buffer = '';

  constructor(private readonly ndjson: boolean) {}

  event(event: EngineEvent): void {
    this.buffer += (this.ndjson ? JSON.stringify(event) : formatEventText(event)) + '\n';
    if (this.buffer.length > 1 << 16) this.flush();
  }

  finish(summary: RunSummary): void {
    this.buffer += this.ndjson ? JSON.stringify(summaryRecord(summary)) + '\n' : formatSummaryText(summary);
    this.flush();
  }

  private flush(): void {
    process.stdout.write(this.buffer);
    this.buffer = '';
  }
}
