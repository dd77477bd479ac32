/**
 * Runs a crash left open: at open, a run whose recording process no longer exists is closed
 * as `interrupted` at its last received line. A run still recorded by a live process on this
 * machine (another Taperline with the same file open) is left alone.
 */
import type Database from 'better-sqlite3';
import { hostname } from 'node:os';

export const HOST = hostname();

function pidAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

export function closeInterruptedRuns(db: Database.Database): number {
  const openRuns = db
    .prepare<[], { id: number; writer_pid: number | null; writer_host: string | null }>(
      'SELECT id, writer_pid, writer_host FROM runs WHERE end_reason IS NULL',
    )
    .all();
  const close = db.prepare(
    `UPDATE runs SET end_reason = 'interrupted', writer_pid = NULL, writer_host = NULL,
       end_rx_s = coalesce((SELECT max(rx_s) FROM lines WHERE lines.run_id = runs.id), last_rx_s, start_rx_s),
       lines = max(lines, (SELECT count(*) FROM lines WHERE lines.run_id = runs.id AND kind NOT IN ('sent', 'blank'))),
       rejected = max(rejected, (SELECT count(*) FROM lines WHERE lines.run_id = runs.id AND kind = 'rejected'))
     WHERE id = ?`,
  );
  let closed = 0;
  db.transaction(() => {
    for (const r of openRuns) {
      const live =
        r.writer_pid !== null &&
        r.writer_host === HOST &&
        r.writer_pid !== process.pid &&
        pidAlive(r.writer_pid);
      if (!live) closed += close.run(r.id).changes;
    }
  })();
  return closed;
}
