/** A run of a recording database, read back as if its lines came from a file again. */
import { existsSync } from 'node:fs';
import { openRunReader, RecorderOpenError } from '../recorder';
import { UsageError } from './errors';
import type { LineInput } from './line-input';
import { resolveProfileJson } from './profile-file';

function parseRunSelector(run: string): number | 'latest' {
  if (run === 'latest') return 'latest';
  const id = Number(run);
  if (!Number.isInteger(id) || id <= 0)
    throw new UsageError(`--run must be a run id or latest (got "${run}")`);
  return id;
}

/** Opens a recording database and finds the run; every failure is one line naming the file. */
export function openRecordedReader(
  dbPath: string,
  run: string,
): { reader: ReturnType<typeof openRunReader>; runId: number } {
  if (!existsSync(dbPath)) throw new UsageError(`no such database: ${dbPath}`);
  const selector = parseRunSelector(run);
  let reader: ReturnType<typeof openRunReader>;
  try {
    reader = openRunReader(dbPath);
  } catch (err) {
    throw new UsageError(
      err instanceof RecorderOpenError ? err.message : `cannot open ${dbPath}: ${String(err)}`,
    );
  }
  const runId = reader.resolveRunId(selector);
  if (runId === null) {
    reader.close();
    throw new UsageError(
      selector === 'latest' ? `${dbPath} holds no runs` : `${dbPath} has no run ${selector}`,
    );
  }
  return { reader, runId };
}

export function openRecordedRun(dbPath: string, run: string): LineInput {
  const { reader, runId } = openRecordedReader(dbPath, run);
  let profile: ReturnType<typeof resolveProfileJson>;
  try {
    profile = resolveProfileJson(reader.profileOf(runId), `the profile recorded with run ${runId}`);
  } catch (err) {
    // A bad recorded profile must not leave the database open behind the usage error.
    reader.close();
    throw err;
  }
  return {
    profile,
    forEach: async (onLine) => {
      try {
        for (const line of reader.lineIterator(runId)) onLine(line.text, line.rxS, line.tooLong === true);
      } finally {
        reader.close();
      }
    },
    async *lines() {
      try {
        for (const line of reader.lineIterator(runId))
          yield { text: line.text, rxS: line.rxS, tooLong: line.tooLong === true };
      } finally {
        reader.close();
      }
    },
  };
}
