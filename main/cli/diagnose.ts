/**
 * `taperline diagnose`: reads a run (telemetry file, standard input or a recorded run) through
 * the same pipeline as a live port and explains its first fault (docs/codes.md and docs/cli.md).
 */
import type { Command } from 'commander';
import { diagnose, type Diagnosis } from '@shared/engine/diagnosis';
import { fmtT } from '@shared/engine/diagnosis/format';
import { collectRun } from '../report/collect-run';
import { nonNegativeNumber, positiveNumber } from './options';
import { openLineInput } from './line-input';
import { loadProfileFile } from './profile-file';

interface DiagnoseOptions {
  run: string;
  db?: string;
  profile?: string;
  at?: string;
  json?: boolean;
  interval: string;
}

export function registerDiagnose(program: Command): void {
  program
    .command('diagnose')
    .description('Explain why a run faulted: causes ranked by confidence, with evidence and next steps.')
    .argument('[file]', 'telemetry file, - for standard input, or a .sqlite recording')
    .option('--run <id|latest>', 'which recorded run (with a database)', 'latest')
    .option('--db <file>', 'read a recorded run from this database')
    .option('--profile <file>', 'profile JSON (what is charged and how it reports)')
    .option(
      '--at <seconds>',
      'diagnose this moment (seconds since the first sample) instead of the first fault',
    )
    .option('--json', 'print the diagnosis as one JSON object')
    .option('--interval <seconds>', 'seconds between lines that carry no device time', '1')
    .action(async (file: string | undefined, options: DiagnoseOptions) => {
      const text = await runDiagnose(file, options);
      process.stdout.write(text);
    });
}

async function runDiagnose(file: string | undefined, options: DiagnoseOptions): Promise<string> {
  const atT = options.at === undefined ? undefined : nonNegativeNumber('--at', options.at, 'seconds');
  const intervalS = positiveNumber('--interval', options.interval, 'seconds');
  const profile = options.profile ? loadProfileFile(options.profile) : null;
  const input = openLineInput(file, { db: options.db, run: options.run, intervalS });
  const run = await collectRun(input, profile);
  if (run.assumedProfileNote) process.stderr.write(`taperline: ${run.assumedProfileNote}\n`);
  const result = diagnose({ profile: run.profile, samples: run.samples, events: run.events, atT });
  return options.json ? JSON.stringify(result) + '\n' : formatDiagnosisText(result, run.samples.length);
}

/** The readable form: one block per cause, evidence and next steps as bullet lines. */
export function formatDiagnosisText(d: Diagnosis, sampleCount: number): string {
  const lines = [`Diagnosis at ${fmtT(d.t)} (${d.t} s since the first sample; ${sampleCount} samples read)`];
  if (d.causes.length === 0) lines.push('No cause found: nothing in the history points at a fault.');
  d.causes.forEach((c, i) => {
    lines.push('', `${i + 1}. ${c.code}  (confidence ${c.confidence.toFixed(2)})`);
    for (const e of c.evidence) lines.push(`   - ${e}`);
    if (c.next.length) lines.push('   next:');
    for (const n of c.next) lines.push(`   * ${n}`);
  });
  return lines.join('\n') + '\n';
}
