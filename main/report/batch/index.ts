/** The Batch report (HTML and CSV) of the runs of one burn-in. */
import { writeFileSync } from 'node:fs';
import type { BatchSummary, JudgedRun } from '../judge-run';
import { batchCsv } from './csv';
import { buildBatchReportHtml } from './html';

export { batchCsv } from './csv';
export { buildBatchReportHtml } from './html';
export { BatchRefusal, batchRunsOf, judgeRecordedBatch, recordedBatchFile } from './recorded-batch';

export function writeBatchReport(
  runs: readonly JudgedRun[],
  summary: BatchSummary,
  out: { htmlPath?: string; csvPath?: string; title: string },
): void {
  if (out.htmlPath) writeFileSync(out.htmlPath, buildBatchReportHtml(runs, summary, out.title));
  if (out.csvPath) writeFileSync(out.csvPath, batchCsv(runs));
}
