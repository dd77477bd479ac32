/**
 * Where replay and diagnose read lines from: a telemetry file, standard input, or a run of
 * a recording database (read back exactly as if from a file, with its receive times).
 */
import type { ResolvedProfile } from '@shared/chemistry/types';
import { UsageError } from './errors';
import {
  readTelemetryLines,
  streamTelemetryBytes,
  streamTelemetryLines,
  type TimedByteLine,
  type TimedLine,
} from './read-lines';
import { openRecordedRun } from './recorded-run';

export interface LineInput {
  /** The profile the input was recorded with, when it carries one (database runs). */
  profile: ResolvedProfile | null;
  /** Fast path: every line, synchronously per chunk. */
  forEach(onLine: (text: string, rxS: number, tooLong: boolean) => void): Promise<void>;
  /** Faster still for files: every line as bytes (absent for database runs, which hold text). */
  forEachBytes?: (onLine: TimedByteLine) => Promise<void>;
  lines(): AsyncIterable<TimedLine>;
}

export interface LineInputOptions {
  db?: string;
  run?: string;
  intervalS?: number;
}

const DATABASE_FILE = /\.(sqlite3?|db)$/i;

export function openLineInput(file: string | undefined, options: LineInputOptions): LineInput {
  const dbPath = options.db ?? (file && DATABASE_FILE.test(file) ? file : undefined);
  if (dbPath) return openRecordedRun(dbPath, options.run ?? 'latest');
  if (!file) throw new UsageError('give a telemetry FILE, - for standard input, or --db FILE');
  return {
    profile: null,
    forEach: async (onLine) => {
      await streamTelemetryLines(file, onLine, { intervalS: options.intervalS });
    },
    forEachBytes: async (onLine) => {
      await streamTelemetryBytes(file, onLine, { intervalS: options.intervalS });
    },
    lines: () => readTelemetryLines(file, { intervalS: options.intervalS }),
  };
}
