/** The batch table as CSV: one row per board, units in the headers. */
import { stringify } from 'csv-stringify/sync';
import { CHECK_MODULES } from '@shared/engine/checks';
import type { JudgedRun } from '../judge-run';
import { batchRows, inertCell, measuredKeys } from './table';

export function batchCsv(runs: readonly JudgedRun[]): string {
  const keys = measuredKeys(runs);
  const header = [
    'board',
    'verdict',
    ...keys.map((k) => (CHECK_MODULES[k].unit ? `${k} (${CHECK_MODULES[k].unit})` : k)),
    'first failing check',
    'top diagnosis cause',
    'operator',
    'firmware',
    'source',
  ];
  const rows = batchRows(runs).map((r) => [
    inertCell(r.board),
    r.verdict,
    ...keys.map((k) => {
      const v = r.values[k];
      return v === undefined || v.measured === null ? '' : String(v.measured);
    }),
    inertCell(r.firstFailure),
    inertCell(r.topCause),
    inertCell(r.operator),
    inertCell(r.firmware),
    inertCell(r.source),
  ]);
  return stringify([header, ...rows]);
}
