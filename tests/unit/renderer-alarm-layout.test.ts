/** Pure layout rules of the dashboard: marker labels in rows, Rack tile order held under the pointer. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { layoutLabelRows } from '../../renderer/charts/label-rows';
import { heldOrder, tileAlarmState, tileClassName } from '../../renderer/views/rack-tile-state';
import type { StationModel } from '../../renderer/store';

test('labels that would overlap go to the next row; far apart ones share a row', () => {
  // "input-low" at 100 px (60 px wide) and "fault-pin" at 110 px: overlapping, so two rows.
  const { rows, hidden } = layoutLabelRows(
    [
      { x: 100, widthPx: 60 },
      { x: 110, widthPx: 55 },
      { x: 300, widthPx: 50 },
    ],
    3,
  );
  assert.deepEqual(rows, [0, 1, 0]);
  assert.equal(hidden, 0);
});

test('labels beyond the row limit are hidden and counted, never drawn on top of another', () => {
  const boxes = [0, 5, 10, 15].map((x) => ({ x, widthPx: 40 }));
  const { rows, hidden } = layoutLabelRows(boxes, 2);
  assert.deepEqual(rows, [0, 1, -1, -1]);
  assert.equal(hidden, 2);
});

test('input order does not matter: rows are assigned left to right', () => {
  const { rows } = layoutLabelRows(
    [
      { x: 200, widthPx: 30 },
      { x: 0, widthPx: 30 },
      { x: 20, widthPx: 30 },
    ],
    3,
  );
  assert.deepEqual(rows, [0, 0, 1]);
});

test('Rack order: sorted when nobody points at it, held while hovered or focused', () => {
  assert.deepEqual(heldOrder(['a', 'b', 'c'], ['c', 'a', 'b'], false), ['c', 'a', 'b']);
  assert.deepEqual(heldOrder(['a', 'b', 'c'], ['c', 'a', 'b'], true), ['a', 'b', 'c']);
  // A station that left is dropped, a new one goes at the end, while held.
  assert.deepEqual(heldOrder(['a', 'b', 'c'], ['d', 'c', 'a'], true), ['a', 'c', 'd']);
  // The first draw has nothing to hold.
  assert.deepEqual(heldOrder([], ['b', 'a'], true), ['b', 'a']);
});

/** A station as the Rack reads it: phase, source state, active alarms and which are acknowledged. */
function station(
  phase: string,
  alarms: { code: string; level: 'warn' | 'critical' }[],
  acked: string[] = [],
) {
  const activeAlarms = alarms.map((a, i) => ({ type: 'alarm', t: 100 + i, message: 'm', ...a }));
  return {
    view: { state: { phase, activeAlarms }, source: { state: 'open' } },
    isAcked: (a: { code: string }) => acked.includes(a.code),
  } as unknown as StationModel;
}

test('a Done tile with a critical alarm reads as the alarm, not as a green Done', () => {
  const model = station('done', [{ code: 'overtemp', level: 'critical' }]);
  const state = tileAlarmState(model);
  assert.equal(state.kind, 'active');
  const cls = tileClassName(model, state).split(' ');
  assert.ok(cls.includes('tile-trouble'));
  assert.ok(cls.includes('tile-alarm-over-phase'), 'the phase is demoted to a side note');
});

test('acknowledged and active alarms get different looks', () => {
  const active = station('cc', [{ code: 'stall', level: 'warn' }]);
  const acked = station('cc', [{ code: 'stall', level: 'warn' }], ['stall']);
  assert.ok(tileClassName(active, tileAlarmState(active)).includes('tile-attention'));
  const ackedState = tileAlarmState(acked);
  assert.equal(ackedState.kind, 'acked');
  assert.ok(tileClassName(acked, ackedState).includes('tile-acked'));
  assert.ok(!tileClassName(acked, ackedState).includes('tile-attention'));
  // The unacknowledged alarm is named first when both kinds are active.
  const mixed = station(
    'cc',
    [
      { code: 'overtemp', level: 'critical' },
      { code: 'stall', level: 'warn' },
    ],
    ['overtemp'],
  );
  const mixedState = tileAlarmState(mixed);
  assert.equal(mixedState.alarm?.code, 'stall');
  assert.equal(mixedState.kind, 'active');
  assert.equal(mixedState.more, 1);
});
