/**
 * `taperline check`: judges runs against the board's design values (the profile's `expect`)
 * and exits with the verdict, so a production script can use it as go/no-go:
 * 0 pass, 1 fail, 3 incomplete (a check could not be measured), 2 usage error.
 * Several files, or a recorded batch, print one line per board and the batch's yield.
 */
import { basename } from 'node:path';
import type { Command } from 'commander';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { Check, Verdict } from '@shared/engine/checks';
import { collectRun } from '../report/collect-run';
import { byBoard, judgeRun, summarizeBatch, type BatchSummary, type JudgedRun } from '../report/judge-run';
import { writeBatchReport } from '../report/batch';
import { UsageError } from './errors';
import { openLineInput } from './line-input';
import { positiveNumber } from './options';
import { loadProfileFile } from './profile-file';
import { openRecordedReader } from './recorded-run';
import { openRecorder } from '../recorder';

interface CheckOptions {
  db?: string;
  run: string;
  batch?: string;
  profile?: string;
  json?: boolean;
  out?: string;
  csv?: string;
  store?: boolean;
  interval: string;
}

const DATABASE_FILE = /\.(sqlite3?|db)$/i;
export const EXIT_OF: Record<Verdict, number> = { pass: 0, fail: 1, incomplete: 3 };

export function registerCheck(program: Command): void {
  program
    .command('check')
    .description(
      "Judge runs against the board's design values (profile key expect): pass, fail or incomplete.",
    )
    .argument('[files...]', 'telemetry files, - for standard input, or a .sqlite recording')
    .option('--db <file>', 'read recorded runs from this database')
    .option('--run <id|latest>', 'which recorded run (with a database)', 'latest')
    .option('--batch <id>', 'every run of this burn-in batch (with a database)')
    .option('--profile <file>', 'profile JSON with expect (else the profile recorded with the run)')
    .option('--json', 'print the verdict as JSON')
    .option('--out <file>', 'also write a batch report (HTML) of the runs checked')
    .option('--csv <file>', 'also write the batch table as CSV')
    .option('--store', 'store each verdict with its recorded run (with a database)')
    .option('--interval <seconds>', 'seconds between lines that carry no device time', '1')
    .action(async (files: string[], options: CheckOptions) => {
      process.exitCode = await runCheck(files, options);
    });
}

interface Target {
  source: string;
  file?: string;
  db?: string;
  runId?: number;
}

async function runCheck(files: string[], options: CheckOptions): Promise<number> {
  const intervalS = positiveNumber('--interval', options.interval, 'seconds');
  const profile = options.profile ? loadProfileFile(options.profile) : null;
  if (profile && !profile.expect) throw new UsageError(noExpect(`profile ${options.profile}`));
  const targets = listTargets(files, options);
  const judged: JudgedRun[] = [];
  for (const target of targets) judged.push(await judgeTarget(target, profile, intervalS, options));
  if (judged.length > 1) {
    // One line per board, in board order (runs without a board id last, by source).
    const order = judged.map((j, i) => ({ j, t: targets[i] }));
    order.sort((a, b) => byBoard(a.j, b.j));
    judged.splice(0, judged.length, ...order.map((o) => o.j));
    targets.splice(0, targets.length, ...order.map((o) => o.t));
  }
  const summary = summarizeBatch(judged);
  if (options.store) storeVerdicts(targets, judged);
  if (options.out || options.csv) {
    writeBatchReport(judged, summary, {
      htmlPath: options.out,
      csvPath: options.csv,
      title: options.batch ? `Batch ${options.batch}` : `${judged.length} boards`,
    });
  }
  const single = judged.length === 1 && !options.batch;
  process.stdout.write(options.json ? jsonOf(judged, summary, single) : textOf(judged, summary, single));
  return EXIT_OF[single ? judged[0].report.verdict : batchVerdict(summary)];
}

function listTargets(files: string[], options: CheckOptions): Target[] {
  if (options.batch !== undefined) {
    const dbPath = options.db ?? files.find((f) => DATABASE_FILE.test(f));
    if (!dbPath) throw new UsageError('--batch needs a recording database (--db FILE or a .sqlite FILE)');
    const { reader } = openRecordedReader(dbPath, 'latest');
    try {
      const runs = reader.listRuns().filter((r) => r.batchId === options.batch);
      if (runs.length === 0) throw new UsageError(`${dbPath} holds no runs of batch "${options.batch}"`);
      return runs.reverse().map((r) => ({ source: `${basename(dbPath)}#${r.id}`, db: dbPath, runId: r.id }));
    } finally {
      reader.close();
    }
  }
  if (options.db) {
    const { reader, runId } = openRecordedReader(options.db, options.run);
    reader.close();
    return [{ source: `${basename(options.db)}#${runId}`, db: options.db, runId }];
  }
  if (files.length === 0) throw new UsageError('give a telemetry FILE, - for standard input, or --db FILE');
  return files.map((file) => {
    if (!DATABASE_FILE.test(file)) return { source: file === '-' ? 'standard input' : basename(file), file };
    const { reader, runId } = openRecordedReader(file, options.run);
    reader.close();
    return { source: `${basename(file)}#${runId}`, db: file, runId };
  });
}

async function judgeTarget(
  target: Target,
  profile: ResolvedProfile | null,
  intervalS: number,
  options: CheckOptions,
): Promise<JudgedRun> {
  let stored: {
    boardId: string | null;
    operator: string | null;
    firmware: string | null;
    batchId: string | null;
  } = { boardId: null, operator: null, firmware: null, batchId: null };
  if (target.db !== undefined) {
    const { reader } = openRecordedReader(target.db, String(target.runId));
    try {
      const row = reader.getRun(target.runId as number);
      if (row) {
        stored = {
          boardId: row.boardId ?? null,
          operator: row.operator ?? null,
          firmware: row.firmware ?? null,
          batchId: row.batchId ?? null,
        };
      }
    } finally {
      reader.close();
    }
  }
  const input = target.db
    ? openLineInput(undefined, { db: target.db, run: String(target.runId) })
    : openLineInput(target.file, { intervalS });
  const run = await collectRun(input, profile);
  if (!run.profile.expect) {
    throw new UsageError(
      noExpect(run.assumedProfileNote ? 'no --profile was given and' : `the profile of ${target.source}`),
    );
  }
  if (run.assumedProfileNote) process.stderr.write(`taperline: ${run.assumedProfileNote}\n`);
  const judged = judgeRun(
    run,
    {
      ...run.identity,
      // What was typed at the station wins over what the firmware printed.
      boardId: stored.boardId ?? run.identity.board ?? null,
      operator: stored.operator ?? run.identity.operator,
      firmware: stored.firmware ?? run.identity.firmware,
      batch: stored.batchId ?? run.identity.batch ?? options.batch,
    },
    target.source,
  );
  return judged;
}

function noExpect(what: string): string {
  return (
    `${what} has no expect key, so there is nothing to judge the board against; ` +
    'add "expect": {"chargeCurrentA": [0.9, 1.1], "regulationV": [12.47, 12.73], …} with the design limits'
  );
}

function storeVerdicts(targets: Target[], judged: JudgedRun[]): void {
  // Written through the recorder so its queue, retry and schema rules apply.
  const byDb = new Map<string, { runId: number; json: string; board: string | null }[]>();
  targets.forEach((t, i) => {
    if (t.db === undefined || t.runId === undefined) return;
    const list = byDb.get(t.db) ?? [];
    list.push({ runId: t.runId, json: JSON.stringify(judged[i].report), board: judged[i].report.board });
    byDb.set(t.db, list);
  });
  if (byDb.size === 0) throw new UsageError('--store needs recorded runs (--db FILE or a .sqlite FILE)');
  for (const [db, list] of byDb) storeInto(db, list);
}

function storeInto(db: string, list: { runId: number; json: string; board: string | null }[]): void {
  const recorder = openRecorder(db);
  try {
    for (const r of list)
      recorder.setRunInfo(r.runId, { verdictJson: r.json, ...(r.board ? { boardId: r.board } : {}) });
  } finally {
    recorder.close();
  }
}

export function batchVerdict(s: BatchSummary): Verdict {
  return s.fail > 0 ? 'fail' : s.incomplete > 0 ? 'incomplete' : 'pass';
}

function jsonOf(judged: JudgedRun[], summary: BatchSummary, single: boolean): string {
  if (single) return JSON.stringify(judged[0].report) + '\n';
  return (
    JSON.stringify({
      runs: judged.map((j) => ({ source: j.source, ...j.report, topCause: j.topCause })),
      summary,
    }) + '\n'
  );
}

const shown = (c: Check): string =>
  c.measured === null ? 'not measured' : `${c.measured}${c.unit ? ' ' + c.unit : ''}`;

function textOf(judged: JudgedRun[], summary: BatchSummary, single: boolean): string {
  if (single) {
    const j = judged[0];
    const lines = [`${j.report.board ?? j.source}: ${j.report.verdict.toUpperCase()}`];
    if (j.report.fault)
      lines.push(
        `  the charger faulted at ${(j.report.fault.t / 60).toFixed(1)} min: ${j.report.fault.what}`,
      );
    for (const c of j.report.checks) {
      lines.push(
        `  ${c.result.padEnd(12)} ${c.code.padEnd(14)} ${shown(c).padEnd(14)} [${c.min}, ${c.max}]  ${c.note}`,
      );
    }
    return lines.join('\n') + '\n';
  }
  const lines = judged.map((j) => {
    const failed = j.report.checks.filter((c) => c.result === 'fail');
    const missing = j.report.checks.filter((c) => c.result === 'not-measured');
    const why = [
      ...failed.map((c) => `${c.code} ${shown(c)} outside [${c.min}, ${c.max}]`),
      ...(j.report.fault ? [`charger fault at ${(j.report.fault.t / 60).toFixed(1)} min`] : []),
      ...missing.map((c) => `${c.code} not measured`),
    ];
    return `${(j.report.board ?? j.source).padEnd(16)} ${j.report.verdict.padEnd(10)} ${why.join('; ')}`;
  });
  lines.push(
    `${summary.boards} boards: ${summary.pass} pass, ${summary.fail} fail, ${summary.incomplete} incomplete; yield ${summary.yieldPct} %`,
  );
  return lines.join('\n') + '\n';
}
