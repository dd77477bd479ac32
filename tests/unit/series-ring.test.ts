import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { RingBuffer } from '@shared/series/ring-buffer';

test('keeps the newest capacity points, oldest first', () => {
  const ring = new RingBuffer(3);
  assert.equal(ring.length, 0);
  assert.ok(Number.isNaN(ring.xAt(0)));
  for (let i = 1; i <= 5; i++) ring.push(i, i * 10);
  assert.equal(ring.length, 3);
  assert.deepEqual([...ring.toArrays().x], [3, 4, 5]);
  assert.deepEqual([...ring.toArrays().y], [30, 40, 50]);
  assert.equal(ring.xAt(0), 3);
  assert.equal(ring.yAt(2), 50);
  ring.clear();
  assert.equal(ring.length, 0);
  assert.deepEqual([...ring.toArrays().x], []);
});

test('sinceX returns the window x >= minX', () => {
  const ring = new RingBuffer(5);
  for (let i = 0; i < 8; i++) ring.push(i * 10, i);
  // holds x = 30..70
  assert.deepEqual([...ring.sinceX(45).x], [50, 60, 70]);
  assert.deepEqual([...ring.sinceX(0).x], [30, 40, 50, 60, 70]);
  assert.deepEqual([...ring.sinceX(1000).x], []);
});

test('behaves like "the last capacity elements of everything pushed" (model check)', () => {
  fc.assert(
    fc.property(
      fc.integer({ min: 1, max: 20 }),
      fc.array(fc.double({ noNaN: true }), { maxLength: 100 }),
      (cap, ys) => {
        const ring = new RingBuffer(cap);
        ys.forEach((y, i) => ring.push(i, y));
        const expected = ys.slice(Math.max(0, ys.length - cap));
        const { x, y } = ring.toArrays();
        assert.deepEqual([...y], expected);
        assert.deepEqual(
          [...x],
          expected.map((_, k) => ys.length - expected.length + k),
        );
      },
    ),
  );
});

test('a bad capacity falls back to 1 instead of throwing', () => {
  const ring = new RingBuffer(0);
  ring.push(1, 2);
  ring.push(3, 4);
  assert.equal(ring.capacity, 1);
  assert.deepEqual([...ring.toArrays().x], [3]);
});
