/**
 * `taperline replay`: reads recorded or captured telemetry through the same pipeline as a
 * live port and prints the phases, alarms and a summary (NDJSON with --events).
 */
import type { Command } from 'commander';
import { positiveNumber, speedOrMax } from './options';
import { loadProfileFile } from './profile-file';
import { openLineInput } from './line-input';
import { EventSink, replayInto } from './replay-run';

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
  const sink = new EventSink(options.events === true, (text) => process.stdout.write(text));
  await replayInto(input, explicitProfile ?? input.profile, sink, {
    speed,
    onNote: (note) => process.stderr.write(`taperline: ${note}\n`),
  });
}
