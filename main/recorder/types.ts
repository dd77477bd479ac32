/** Contract of the SQLite recorder, read by the Runs view, replay, diagnose and report. */
import type { Writable } from 'node:stream';
import type { OverviewBucket, RunEndReason, RunRow, SeriesField } from '@shared/ipc/payloads';

export type { OverviewBucket, RunEndReason, RunRow, SeriesField };
import type { EngineEvent, TimedSample } from '@shared/engine/types';
import type { FeedLine } from '../station/types';

export interface RunReader {
  listRuns(): RunRow[];
  getRun(runId: number): RunRow | null;
  /** `latest` = the newest run. */
  resolveRunId(run: number | 'latest'): number | null;
  deleteRun(runId: number): void;
  /** The profile JSON the run was recorded with (as the user wrote it). */
  profileOf(runId: number): unknown;
  overview(
    runId: number,
    fields: SeriesField[],
    fromT: number,
    toT: number,
    buckets: number,
  ): OverviewBucket[];
  /** Samples with fromT <= t < toT, at most `limit` (default 100,000): for a window of a run. */
  samples(runId: number, fromT: number, toT: number, limit?: number): TimedSample[];
  /** Every sample of a run however long, read in pages: for diagnosis and reports. */
  allSamples(runId: number): TimedSample[];
  events(runId: number): EngineEvent[];
  rawLines(runId: number, afterRxS?: number, limit?: number): FeedLine[];
  /** Every received line of a run in order, as if read again from a file. */
  lineIterator(runId: number): IterableIterator<{ text: string; rxS: number; tooLong?: boolean }>;
  /**
   * Samples as CSV (units in the headers) into `out`, which the export ends when done (or
   * destroys when the export fails). Rejects when `out` errors or closes early.
   */
  exportCsv(runId: number, out: Writable): Promise<void>;
}

// ---- Write side (additive): what a station writes while it records. ----

/** What a new run is started with. */
export interface RunStart {
  stationId: string;
  stationLabel: string;
  profileName: string;
  chemistry: string;
  /** The profile JSON as the user wrote it. */
  profileJson: unknown;
  startRxS: number;
}

/** What is known of the board a run tested, and the run's verdict (JSON of its checks). */
export interface RunInfo {
  boardId?: string | null;
  operator?: string | null;
  firmware?: string | null;
  batchId?: string | null;
  verdictJson?: string | null;
}

/** Running totals of a run, as the pipeline's summary gives them. */
export interface RunTotals {
  durationS: number;
  ah: number;
  wh: number;
  lines: number;
  rejected: number;
  phaseS?: Partial<Record<string, number>>;
  /** The engine's latest internal-resistance estimate, ohms (whole pack); null when none yet. */
  internalResistanceOhm?: number | null;
}

/** One received (or sent) line as it is stored; `tooLong` = cut at MAX_LINE_BYTES. */
export interface StoredLine extends FeedLine {
  tooLong?: boolean;
}

/** How the recorder is doing: a person reads `problem`; `dropped` counts rows given up. */
export interface RecorderHealth {
  ok: boolean;
  problem: string | null;
  /** Rows waiting for the next successful write (kept in memory and retried). */
  pending: number;
  /** Rows dropped because the backlog outgrew its cap while writes kept failing. */
  dropped: number;
}

export interface RecorderEvents {
  /** Writing failed (disk full, read-only folder, locked database): level is always critical. */
  problem: [{ message: string; level: 'critical' }];
  /** Writes succeed again after a problem. */
  recovered: [{ message: string }];
}

export interface Recorder extends RunReader {
  readonly dbPath: string;
  /**
   * The station's latest run when a crash left it (closed as `interrupted` at open) with the
   * same profile, its last line no more than `withinS` before `atRxS`; else null. Whether the
   * same pack is still on charge is the caller's call (the station manager checks continuity).
   */
  resumableRun(
    stationId: string,
    profileJson: unknown,
    atRxS: number,
    withinS: number,
  ): { runId: number; lastRxS: number } | null;
  /** Continue an interrupted run found by resumableRun: it is open again, written by this process. */
  resumeRun(runId: number): { runId: number; resumed: true; lastRxS: number | null };
  /**
   * Start a run. When `resumeWithinS` is set and the same station's latest run was closed
   * as `interrupted` (a crash) no longer than that before `startRxS`, with the same profile,
   * that run is reopened and continued instead.
   */
  startRun(
    start: RunStart,
    options?: { resumeWithinS?: number },
  ): { runId: number; resumed: boolean; lastRxS: number | null };
  addLine(runId: number, line: StoredLine): void;
  addSample(runId: number, sample: TimedSample): void;
  /** A line the host sent to the device: kept in the raw lines and as a `sent` event at run time `t`. */
  addSent(runId: number, sent: { text: string; rxS: number; t: number }): void;
  /** A gap event with `endT` set completes the open gap of the same `t` (one row per gap). */
  addEvent(runId: number, event: EngineEvent): void;
  updateTotals(runId: number, totals: RunTotals): void;
  /** Board identity, batch and verdict of a run; only the keys given are written. */
  setRunInfo(runId: number, info: RunInfo): void;
  endRun(runId: number, endRxS: number, reason: RunEndReason, totals?: RunTotals): void;
  /** Write everything queued now (also done every 250 ms and when the batch is large). */
  flush(): void;
  health(): RecorderHealth;
  on<K extends keyof RecorderEvents>(event: K, listener: (...args: RecorderEvents[K]) => void): this;
  off<K extends keyof RecorderEvents>(event: K, listener: (...args: RecorderEvents[K]) => void): this;
  /** Spill files of earlier closes imported (or not: `error`) when this recorder opened. */
  readonly importedSpills: SpillImport[];
  /**
   * Flush, checkpoint the WAL and close the file. Rows that still cannot be written are saved
   * to a spill file (NDJSON next to the database, else in the temporary folder) that the next
   * open imports; the result says how many and where.
   */
  close(): RecorderCloseResult;
}

export interface SpillImport {
  path: string;
  rows: number;
  error?: string;
}

export interface RecorderCloseResult {
  /** Rows (lines, samples, events, run starts and ends) not in the database at close. */
  unwritten: number;
  /** Why they could not be written. */
  reason?: string;
  /** Where they were saved; null when nothing was left or the spill could not be written. */
  spill: string | null;
  spillError?: string;
}
