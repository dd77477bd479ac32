/**
 * The batch table: one row per board, the same cells for HTML and CSV. Text cells that a
 * spreadsheet would run as a formula are made inert (OWASP, "CSV Injection").
 */
import { CHECK_CODES, firstFailure } from '@shared/engine/checks';
import type { ExpectKey } from '@shared/chemistry/types';
import type { JudgedRun } from '../judge-run';

/** The keys any of the runs checked, in the contract's order: the table's value columns. */
export function measuredKeys(runs: readonly JudgedRun[]): ExpectKey[] {
  return CHECK_CODES.filter((k) => runs.some((r) => r.report.checks.some((c) => c.code === k)));
}

export interface BatchRow {
  board: string;
  verdict: string;
  values: Partial<Record<ExpectKey, { measured: number | null; result: string }>>;
  firstFailure: string;
  topCause: string;
  operator: string;
  firmware: string;
  source: string;
}

export function batchRows(runs: readonly JudgedRun[]): BatchRow[] {
  return runs.map((r) => {
    const values: BatchRow['values'] = {};
    for (const c of r.report.checks) values[c.code] = { measured: c.measured, result: c.result };
    return {
      board: r.report.board ?? '',
      verdict: r.report.verdict,
      values,
      firstFailure: firstFailure(r.report) ?? '',
      topCause: r.topCause ? `${r.topCause.code} (${r.topCause.confidence.toFixed(2)})` : '',
      operator: r.operator ?? '',
      firmware: r.firmware ?? '',
      source: r.source,
    };
  });
}

/** A text cell a spreadsheet will not run as a formula (OWASP, "CSV Injection"). */
export function inertCell(text: string): string {
  return /^[=+\-@\t\r]/.test(text) ? `'${text}` : text;
}
