/**
 * A recorded run opened for replay/diagnose/report (`--db`): a run whose stored profile is no
 * longer valid is refused with the bad key named, and the database file is not left open.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, readdirSync, readlinkSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { UsageError } from '../../main/cli/errors';
import { openRecordedRun } from '../../main/cli/recorded-run';
import { openRecorder } from '../../main/recorder';

/** How many of this process's open file descriptors point at `path` (Linux /proc). */
function openHandlesTo(path: string): number {
  let n = 0;
  for (const fd of readdirSync('/proc/self/fd')) {
    try {
      if (readlinkSync(`/proc/self/fd/${fd}`) === path) n++;
    } catch {
      // The descriptor closed while we looked (readdir's own, for one).
    }
  }
  return n;
}

test('a recorded run with an invalid profile is refused and the database is closed', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-open-run-'));
  const dbPath = join(dir, 'runs.sqlite');
  try {
    // Invented demo run: a garden sensor's cell, stored with a key no profile accepts.
    const rec = openRecorder(dbPath);
    const { runId } = rec.startRun({
      stationId: 'bench-3',
      stationLabel: 'garden sensor cell',
      profileName: 'garden sensor 1S',
      chemistry: 'li-ion',
      profileJson: { name: 'garden sensor 1S', chemistry: 'li-ion', cells: 1, wateringCan: true },
      startRxS: 1_800_000_000,
    });
    rec.endRun(runId, 1_800_000_010, 'stopped');
    rec.close();
    assert.equal(openHandlesTo(dbPath), 0);

    assert.throws(
      () => openRecordedRun(dbPath, String(runId)),
      (err: unknown) =>
        err instanceof UsageError &&
        /the profile recorded with run \d+ refused/.test(err.message) &&
        /wateringCan/.test(err.message),
    );
    assert.equal(openHandlesTo(dbPath), 0, 'the reader is closed after the refusal');
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
