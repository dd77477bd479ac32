/** Turns SQLite and file-system failures into sentences a person can act on. */

/** An error opening the recording database, already worded for a person. */
export class RecorderOpenError extends Error {
  override name = 'RecorderOpenError';
}

function codeOf(err: unknown): string {
  if (
    err &&
    typeof err === 'object' &&
    'code' in err &&
    typeof (err as { code: unknown }).code === 'string'
  ) {
    return (err as { code: string }).code;
  }
  return '';
}

/** What went wrong, in words; `dbPath` names the file. */
export function describeDbError(err: unknown, dbPath: string): string {
  const code = codeOf(err);
  const raw = err instanceof Error ? err.message : String(err);
  if (code === 'SQLITE_FULL' || code === 'ENOSPC') return `the disk holding ${dbPath} is full`;
  if (code.startsWith('SQLITE_IOERR') || code === 'EFBIG') {
    return `writing ${dbPath} failed (${raw}: disk full, a file size limit or a failing disk)`;
  }
  if (code.startsWith('SQLITE_READONLY') || code === 'EACCES' || code === 'EPERM' || code === 'EROFS') {
    return `${dbPath} or its folder is read-only`;
  }
  if (code.startsWith('SQLITE_BUSY') || code.startsWith('SQLITE_LOCKED')) {
    return `${dbPath} is locked by another program`;
  }
  if (code.startsWith('SQLITE_CANTOPEN'))
    return `${dbPath} cannot be opened (missing folder or no permission)`;
  if (code.startsWith('SQLITE_CORRUPT') || code === 'SQLITE_NOTADB')
    return `${dbPath} is damaged or is not a Taperline database`;
  return `recording to ${dbPath} failed: ${raw}`;
}
