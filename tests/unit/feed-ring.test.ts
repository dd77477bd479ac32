/** The Line feed's ring: bounded, and a line heard twice (history reply and live push overlap) kept once. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { FeedRing } from '../../renderer/feed-ring';
import type { FeedRow } from '../../renderer/wire';

const line = (rxS: number, text: string): FeedRow => ({ rxS, text, kind: 'sample' }) as FeedRow;

test('the overlap of the history reply and the live pushes is kept once', () => {
  const ring = new FeedRing();
  ring.add([line(1, 't=1'), line(2, 't=2'), line(3, 't=3')]);
  ring.add([line(2, 't=2'), line(3, 't=3'), line(4, 't=4')]);
  assert.deepEqual(
    ring.all().map((r) => r.text),
    ['t=1', 't=2', 't=3', 't=4'],
  );
  assert.equal(ring.total, 4);
});

test('two different lines at the same receive time, and the same text at another time, are both kept', () => {
  const ring = new FeedRing();
  ring.add([line(5, 'a'), line(5, 'b'), line(6, 'a')]);
  assert.equal(ring.all().length, 3);
});
