/**
 * Where replay and diagnose read lines from: a telemetry file, standard input, or a run of
 * a recording database (read back exactly as if from a file, with its receive times).
 */
import type { LineInput } from '../sources/line-input';
import { UsageError } from './errors';
import { readTelemetryLines, streamTelemetryBytes, streamTelemetryLines } from './read-lines';
import { openRecordedRun } from './recorded-run';

export type { LineInput };

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
