import assert from 'node:assert/strict';
import { test } from 'node:test';
import type { EngineEvent } from '@shared/engine/types';
import { gapSpans } from '../../renderer/charts/gap-spans';

test('a live gap announced open and then closed is one span; replay gaps carry their duration', () => {
  const events: EngineEvent[] = [
    { type: 'phase', t: 0, phase: 'cc' },
    { type: 'gap', t: 120, endT: null, reason: 'port lost' },
    { type: 'gap', t: 120, endT: 185, durationS: 65, reason: 'port lost' },
    { type: 'gap', t: 400, endT: null, reason: 'silence' },
  ];
  assert.deepEqual(gapSpans(events), [
    { t0: 120, t1: 185 },
    { t0: 400, t1: null },
  ]);
  // An ended gap is never reopened by a late copy of its start.
  assert.deepEqual(gapSpans([events[2]!, events[1]!]), [{ t0: 120, t1: 185 }]);
});
