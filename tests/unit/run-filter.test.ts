/** The Runs view's search and filters on plain rows (invented demo runs). */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { filterRuns } from '../../renderer/views/run-filter';
import type { RunListRow } from '../../renderer/wire';

const row = (id: number, over: Partial<RunListRow> & Record<string, unknown>): RunListRow =>
  ({
    id,
    stationId: `shelf-${id}`,
    stationLabel: '',
    profileName: 'garden-sensor 3S Li-ion',
    chemistry: 'li-ion',
    startRxS: Date.UTC(2026, 11, id, 12) / 1000,
    endRxS: null,
    endReason: 'completed',
    durationS: 3600,
    ah: 1,
    wh: 11,
    lines: 3600,
    rejected: 0,
    ...over,
  }) as RunListRow;

const runs = [
  row(1, { profileName: 'boat house battery', chemistry: 'lead-acid' }),
  row(2, { endReason: 'interrupted', boardId: 'TB-0042', verdict: 'fail', alarms: ['overtemp'] }),
  row(3, { endReason: null, stationLabel: 'yard box' }),
];
const none = { text: '', from: '', to: '', ended: '' };
const ids = (r: RunListRow[]) => r.map((x) => x.id);

test('free text: every word must match, over station, profile, board, verdict, alarms', () => {
  assert.deepEqual(ids(filterRuns(runs, { ...none, text: 'lead' })), [1]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, text: 'tb-0042 overtemp' })), [2]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, text: 'FAIL' })), [2]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, text: 'yard box' })), [3]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, text: 'nothing-like-this' })), []);
});

test('date range on the start day, and how the run ended', () => {
  process.env.TZ = 'UTC';
  assert.deepEqual(ids(filterRuns(runs, { ...none, from: '2026-12-02' })), [2, 3]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, to: '2026-12-02' })), [1, 2]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, ended: 'recording' })), [3]);
  assert.deepEqual(ids(filterRuns(runs, { ...none, ended: 'interrupted' })), [2]);
});
