/**
 * A run judged against its board's design: the checks' report, who and what was tested, and the
 * top diagnosis cause (for batch tables). The one place `taperline check`, the batch report and
 * the app turn a collected run into a verdict.
 */
import { runChecks, type CheckReport } from '@shared/engine/checks';
import { diagnose } from '@shared/engine/diagnosis';
import type { BoardLine } from '@shared/engine/checks/board-line';
import type { EngineRun } from './collect-run';

export interface JudgedRun {
  /** Where the run came from: a file name, or `db#run`. */
  source: string;
  report: CheckReport;
  operator: string | null;
  firmware: string | null;
  batchId: string | null;
  /** The highest-ranked diagnosis cause when the run faulted or failed; null for a clean run. */
  topCause: { code: string; confidence: number } | null;
}

export function judgeRun(
  run: EngineRun,
  identity: BoardLine & { boardId?: string | null },
  source: string,
): JudgedRun {
  const board = identity.boardId ?? identity.board ?? null;
  const report = runChecks({ profile: run.profile, samples: run.samples, events: run.events, board });
  let topCause: JudgedRun['topCause'] = null;
  if (report.verdict === 'fail') {
    const first = diagnose({ profile: run.profile, samples: run.samples, events: run.events }).causes[0];
    if (first) topCause = { code: first.code, confidence: first.confidence };
  }
  return {
    source,
    report,
    operator: identity.operator ?? null,
    firmware: identity.firmware ?? null,
    batchId: identity.batch ?? null,
    topCause,
  };
}

/** Board order of a batch table: by board id, runs without one last (by source). */
export function byBoard(a: JudgedRun, b: JudgedRun): number {
  return (a.report.board ?? '\uffff' + a.source).localeCompare(b.report.board ?? '\uffff' + b.source);
}

export interface BatchSummary {
  boards: number;
  pass: number;
  fail: number;
  incomplete: number;
  /** Boards that passed over boards tested, percent. */
  yieldPct: number;
}

export function summarizeBatch(runs: readonly JudgedRun[]): BatchSummary {
  const count = (v: string) => runs.filter((r) => r.report.verdict === v).length;
  const pass = count('pass');
  return {
    boards: runs.length,
    pass,
    fail: count('fail'),
    incomplete: count('incomplete'),
    yieldPct: runs.length ? Math.round((1000 * pass) / runs.length) / 10 : 0,
  };
}
