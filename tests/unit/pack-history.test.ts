/** Per-pack history on plain rows (invented demo runs of one boat-house battery and two boards). */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { packHistory, packKeys } from '../../renderer/views/pack-history';
import type { RunListRow } from '../../renderer/wire';

const run = (id: number, over: Partial<RunListRow>): RunListRow =>
  ({
    id,
    stationId: 'shelf-1',
    stationLabel: '',
    profileName: 'boat house battery',
    chemistry: 'lead-acid',
    startRxS: 1_700_000_000 + id * 30 * 86400,
    endRxS: null,
    endReason: 'completed',
    durationS: 36000,
    ah: 40,
    wh: 520,
    lines: 36000,
    rejected: 0,
    ...over,
  }) as RunListRow;

const runs = [
  run(3, { ah: 36 }),
  run(1, { ah: 40 }),
  run(2, { ah: 38, endReason: 'stopped' }),
  run(4, { boardId: 'TB-0042', profileName: 'garden-sensor 3S Li-ion' }),
  run(5, { boardId: 'TB-0042', profileName: 'garden-sensor 3S Li-ion' }),
  run(6, { boardId: 'TB-0043' }),
];

test('packs are keyed by board id, else profile name; only packs with two runs are offered', () => {
  assert.deepEqual(packKeys(runs), [
    { key: 'profile boat house battery', count: 3 },
    { key: 'board TB-0042', count: 2 },
  ]);
});

test('history oldest first, change against the first completed run', () => {
  const rows = packHistory(runs, 'profile boat house battery');
  assert.deepEqual(
    rows.map((r) => r.run.id),
    [1, 2, 3],
  );
  assert.equal(rows[0].ahChangePct, null);
  assert.equal(rows[1].ahChangePct, -5); // 38 of 40 Ah
  assert.equal(rows[2].ahChangePct, -10); // 36 of 40 Ah
});

test('internal resistance per run in milliohms, against the first completed run that has one', () => {
  // Invented demo figures: a boat-house battery whose resistance climbs from 40 to 50 mΩ.
  const withIr = [
    run(1, { internalResistanceOhm: null }), // no current step in this run: no estimate
    run(2, { internalResistanceOhm: 0.04, endReason: 'stopped' }),
    run(3, { internalResistanceOhm: 0.04 }),
    run(4, { internalResistanceOhm: 0.05 }),
    run(5, {}), // recorded before the estimate was kept
  ];
  const rows = packHistory(withIr, 'profile boat house battery');
  assert.deepEqual(
    rows.map((r) => r.irMilliohm),
    [null, 40, 40, 50, null],
  );
  assert.equal(rows[2].irChangePct, null, 'run 3 is the reference: the first completed run with an estimate');
  assert.equal(rows[1].irChangePct, 0);
  assert.ok(Math.abs(rows[3].irChangePct! - 25) < 1e-9); // 50 of 40 mΩ
  assert.equal(rows[0].irChangePct, null);
  assert.equal(rows[4].irChangePct, null);
});
