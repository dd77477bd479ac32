/**
 * `taperline replay`: reads recorded or captured telemetry through the same pipeline as a
 * live port and prints the phases, alarms and a summary (NDJSON with --events).
 */
import type { Command } from 'commander';
import type { EngineEvent, RunSummary } from '@shared/engine/types';
import { positiveNumber, speedOrMax } from './options';
import { loadProfileFile } from './profile-file';
import { openLineInput } from './line-input';
import { ProfiledRun } from '@shared/engine/assumed-profile';
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
    .description(
      'Run a telemetry file (or - for standard input, or a recorded run) through the charge engine.',
    )
    .argument('[file]', 'telemetry file, - for standard input, or a .sqlite recording (or use --db)')
    .option('--profile <file>', 'profile JSON (what is charged and how it reports)')
    .option('--events', 'print NDJSON: one event a line, then a summary line')
    .option('--speed <n|max>', 'replay speed: a multiple of real time, or max', 'max')
    .option('--db <file>', 'read a recorded run from this database instead of FILE')
    .option('--run <id|latest>', 'which recorded run (with a database)', 'latest')
    .option('--interval <seconds>', 'seconds between lines that carry no device time', '1')
    .action(async (file: string | undefined, options: ReplayOptions) => {
      await replay(file, options);
    });
}

async function replay(file: string | undefined, options: ReplayOptions): Promise<void> {
  const speed = speedOrMax('--speed', options.speed);
  const intervalS = positiveNumber('--interval', options.interval, 'seconds');
  const explicitProfile = options.profile ? loadProfileFile(options.profile) : null;
  const input = openLineInput(file, { db: options.db, run: options.run, intervalS });
  const profile = explicitProfile ?? input.profile;
  const sink = new EventSink(options.events === true);
  let lastSampleT: number | null = null;
  const run = new ProfiledRun(
    profile,
    (outcome) => {
      for (const event of outcome.events) sink.event(event);
      if (outcome.sample) lastSampleT = outcome.sample.t;
    },
    (note) => process.stderr.write(`taperline: ${note}\n`),
  );

  if (speed === 'max') {
    await input.forEach((text, rxS, tooLong) => run.push(text, rxS, tooLong));
  } else {
    // Paced on the run clock: wait until the last sample's time, divided by speed, has passed.
    const startedMs = performance.now();
    for await (const line of input.lines()) {
      run.push(line.text, line.rxS, line.tooLong);
      if (lastSampleT === null) continue;
      const aheadMs = (lastSampleT / speed) * 1000 - (performance.now() - startedMs);
      if (aheadMs > 1) await new Promise((resolve) => setTimeout(resolve, aheadMs));
    }
  }
  sink.finish(run.finish().summary());
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
