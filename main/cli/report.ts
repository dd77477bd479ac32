/**
 * `taperline report`: a Run report (one self-contained HTML file, optionally a PDF) of a
 * recorded run or a telemetry file, read through the same pipeline as a live port.
 */
import { writeFileSync } from 'node:fs';
import { basename } from 'node:path';
import type { Command } from 'commander';
import {
  buildRunReport,
  collectRun,
  NoChromiumError,
  recordedRunReportInput,
  renderReportPdf,
  reportInputOf,
  type RunReportInput,
} from '../report';
import { UsageError } from './errors';
import { positiveNumber } from './options';
import { openLineInput } from './line-input';
import { loadProfileFile } from './profile-file';
import { openRecordedReader } from './recorded-run';

interface ReportOptions {
  db?: string;
  run?: string;
  profile?: string;
  out: string;
  pdf?: string;
  interval: string;
}

const DATABASE_FILE = /\.(sqlite3?|db)$/i;

export function registerReport(program: Command): void {
  program
    .command('report')
    .description('Write a Run report: one self-contained HTML file (and a PDF with --pdf).')
    .argument(
      '[target]',
      'run id or latest (with --db), a .sqlite recording, or a telemetry file (- for standard input)',
    )
    .option('--db <file>', 'the recording database holding the run')
    .option('--run <id|latest>', 'which run of a .sqlite FILE', 'latest')
    .option('--profile <file>', 'profile JSON (what is charged and how it reports)')
    .requiredOption('--out <file>', 'where to write the HTML report')
    .option('--pdf <file>', 'also print the report to this PDF (needs Chromium)')
    .option('--interval <seconds>', 'seconds between lines that carry no device time', '1')
    .action(async (target: string | undefined, options: ReportOptions) => {
      await runReport(target, options);
    });
}

async function runReport(target: string | undefined, options: ReportOptions): Promise<void> {
  const intervalS = positiveNumber('--interval', options.interval, 'seconds');
  const profile = options.profile ? loadProfileFile(options.profile) : null;
  const dbPath = options.db ?? (target && DATABASE_FILE.test(target) ? target : undefined);
  const runSelector = options.db ? (target ?? 'latest') : (options.run ?? 'latest');
  let report: RunReportInput;
  if (dbPath && !profile) {
    // A recorded run: its stored samples and gaps through the engine, the same input the
    // app's "Save report" uses, so both give the same report of the same run.
    const { reader, runId } = openRecordedReader(dbPath, runSelector);
    try {
      report = recordedRunReportInput(reader, runId, `run ${runId} of ${basename(dbPath)}`);
    } catch (err) {
      throw new UsageError((err as Error).message);
    } finally {
      reader.close();
    }
  } else {
    // A file, standard input, or a recorded run read again with another --profile.
    let input;
    let source: string;
    if (dbPath) {
      input = openLineInput(undefined, { db: dbPath, run: runSelector, intervalS });
      source = `run ${runSelector} of ${basename(dbPath)}`;
    } else {
      if (!target)
        throw new UsageError('give a run id with --db FILE, a .sqlite recording, or a telemetry file');
      input = openLineInput(target, { intervalS });
      source = target === '-' ? 'standard input' : basename(target);
    }
    const run = await collectRun(input, profile);
    if (run.assumedProfileNote) process.stderr.write(`taperline: ${run.assumedProfileNote}\n`);
    report = reportInputOf(run, `Run report: ${run.profile.name}`, source, {
      board: run.identity.board ?? null,
      operator: run.identity.operator ?? null,
      firmware: run.identity.firmware ?? null,
    });
  }
  const html = buildRunReport(report);
  try {
    writeFileSync(options.out, html);
  } catch (err) {
    throw new UsageError(`cannot write the report to ${options.out}: ${(err as Error).message}`);
  }
  process.stderr.write(
    `taperline: wrote ${options.out} (${report.samples.length} samples, ${report.events.length} events)\n`,
  );
  if (!options.pdf) return;
  try {
    await renderReportPdf(options.out, options.pdf);
    process.stderr.write(`taperline: wrote ${options.pdf}\n`);
  } catch (err) {
    // Whatever went wrong (no Chromium, an unwritable --pdf path, a page that never finished
    // drawing), the HTML is already on disk: say so in one line instead of a stack trace.
    process.stderr.write(`taperline: ${pdfFailureText(err, options.out)}\n`);
    process.exitCode = 1;
  }
}

/** One line: what failed (first line of the error only) and where the HTML report was kept. */
function pdfFailureText(err: unknown, htmlPath: string): string {
  const message = err instanceof Error ? err.message : String(err);
  const first = message.split('\n')[0].trim() || (err instanceof Error ? err.name : 'unknown error');
  // A NoChromiumError already says the HTML was kept and what to install.
  if (err instanceof NoChromiumError) return `PDF not written: ${first}`;
  return `PDF not written: ${first}; the HTML report was kept at ${htmlPath}`;
}
