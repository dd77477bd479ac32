/** Opening a recording database: connection settings, migrations, and readable errors. */
import Database from 'better-sqlite3';
import { accessSync, constants as fsConstants, existsSync, mkdirSync } from 'node:fs';
import { dirname } from 'node:path';
import { describeDbError, RecorderOpenError } from './errors';
import { createRunReader } from './reader';
import { migrate } from './schema';
import type { RunReader } from './types';

/**
 * Open (or create) a recording database with the connection settings every Taperline
 * process uses. Throws RecorderOpenError with a sentence a person can act on.
 */
export function openDatabase(
  dbPath: string,
  options: { readonly?: boolean; busyTimeoutMs?: number } = {},
): Database.Database {
  let db: Database.Database;
  try {
    if (!options.readonly) mkdirSync(dirname(dbPath), { recursive: true });
    db = new Database(dbPath, {
      readonly: options.readonly ?? false,
      fileMustExist: options.readonly ?? false,
    });
  } catch (err) {
    throw new RecorderOpenError(
      `${describeDbError(folderProblem(dbPath) ?? err, dbPath)}; nothing was recorded — fix that or give another --db FILE`,
    );
  }
  try {
    // A lock held by another program is waited for briefly, never long enough to stall the live display.
    db.pragma(`busy_timeout = ${options.busyTimeoutMs ?? 200}`);
    if (!options.readonly) {
      db.pragma('journal_mode = WAL');
      // synchronous = FULL: in WAL mode NORMAL already survives a crash of the app, but a
      // power cut (a bench power strip tripping during a week-long burn-in) can roll back
      // every commit since the last checkpoint. Commits are batched (at most 4 a second
      // while recording live), so the one fsync per commit that FULL costs is small; the
      // large batches of a max-speed replay share one fsync per flush interval (recorder.ts).
      db.pragma('synchronous = FULL');
      db.pragma('journal_size_limit = 67108864');
      // 16 MiB of page cache: a large batch (max-speed replay) commits without spilling pages early.
      db.pragma('cache_size = -16384');
      migrate(db);
    }
  } catch (err) {
    db.close();
    if (err instanceof RecorderOpenError) throw err;
    const msg =
      err instanceof Error && err.message.startsWith('the database was written')
        ? `${dbPath}: ${err.message}`
        : describeDbError(err, dbPath);
    throw new RecorderOpenError(`${msg}; nothing was recorded — fix that or give another --db FILE`);
  }
  return db;
}

/** SQLite says only "cannot open"; the folder itself tells whether it is read-only. */
function folderProblem(dbPath: string): NodeJS.ErrnoException | null {
  const dir = dirname(dbPath);
  if (!existsSync(dir)) return null;
  try {
    accessSync(existsSync(dbPath) ? dbPath : dir, fsConstants.W_OK);
    return null;
  } catch (err) {
    return err as NodeJS.ErrnoException;
  }
}

/** A reader of a recording database without the write side (replay, diagnose, report). */
export function openRunReader(dbPath: string): RunReader & { close(): void } {
  // A reader never creates a file: a wrong path is an error, not an empty database.
  if (!existsSync(dbPath)) throw new RecorderOpenError(`no such recording database: ${dbPath}`);
  let db: Database.Database;
  try {
    db = openDatabase(dbPath);
  } catch (err) {
    // A read-only file is still readable; migrations were applied when it was written.
    db = openDatabase(dbPath, { readonly: true });
    void err;
  }
  return Object.assign(createRunReader(db), { close: () => db.close() });
}
