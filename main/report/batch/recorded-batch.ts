/**
 * The Batch report of a burn-in batch as the app holds it: every recorded run of the batch,
 * each with the profile it was recorded with, judged against that profile's design values.
 * The same judging as `taperline check --batch` (judge-run.ts), from the same recording.
 */
import { parseProfile } from '@shared/chemistry/profile';
import type { ResolvedProfile } from '@shared/chemistry/types';
import type { RunReader, RunRow } from '../../recorder/types';
import { byBoard, judgeRun, summarizeBatch, type BatchSummary, type JudgedRun } from '../judge-run';
import { readRecordedRun } from '../recorded-run';
import { batchCsv } from './csv';
import { buildBatchReportHtml } from './html';

export interface RecordedBatch {
  title: string;
  runs: JudgedRun[];
  summary: BatchSummary;
}

/** A batch that cannot be judged, worded for the person who asked. */
export class BatchRefusal extends Error {
  override name = 'BatchRefusal';
}

/**
 * The runs of a batch, oldest first, each with the profile it was recorded with; refused in
 * words when the batch has no run or a run's profile has no design limits to judge against.
 * Cheap (no samples are read): the app asks it before offering a download.
 */
export function batchRunsOf(reader: RunReader, batchId: string): { row: RunRow; profile: ResolvedProfile }[] {
  const rows = reader
    .listRuns()
    .filter((r) => r.batchId === batchId)
    .sort((a, b) => a.id - b.id);
  if (rows.length === 0) throw new BatchRefusal(`no recorded run belongs to batch "${batchId}"`);
  const runs: { row: RunRow; profile: ResolvedProfile }[] = [];
  const unjudged: number[] = [];
  for (const row of rows) {
    const parsed = parseProfile(reader.profileOf(row.id));
    if (parsed.ok && parsed.profile.expect) runs.push({ row, profile: parsed.profile });
    else unjudged.push(row.id);
  }
  if (unjudged.length > 0) {
    throw new BatchRefusal(
      `batch "${batchId}": the profile of run${unjudged.length > 1 ? 's' : ''} ${unjudged.join(', ')} has no ` +
        'expect key (the design limits), so there is nothing to judge the board against; give the ' +
        'stations a profile with expect and run the batch again, or judge the files with taperline check --profile',
    );
  }
  return runs;
}

export function judgeRecordedBatch(reader: RunReader, batchId: string, source = 'recording'): RecordedBatch {
  const runs = batchRunsOf(reader, batchId).map(({ row, profile }) =>
    judgeRun(
      readRecordedRun(reader, row.id, profile),
      {
        boardId: row.boardId ?? null,
        operator: row.operator ?? undefined,
        firmware: row.firmware ?? undefined,
        batch: batchId,
      },
      `${source}#${row.id}`,
    ),
  );
  runs.sort(byBoard);
  return { title: `Batch ${batchId}`, runs, summary: summarizeBatch(runs) };
}

/** The Batch report file of a recorded batch: the HTML page or the CSV table. */
export function recordedBatchFile(reader: RunReader, batchId: string, what: 'html' | 'csv'): string {
  const batch = judgeRecordedBatch(reader, batchId);
  return what === 'html'
    ? buildBatchReportHtml(batch.runs, batch.summary, batch.title)
    : batchCsv(batch.runs);
}
