import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { LTTB } from 'downsample';
import { lttb, lttbIndices } from '@shared/series/lttb';

// Check vector of the downsample-lttb and downsample-lttb-ts READMEs (LTTB: S. Steinarsson, MSc thesis, University of Iceland, 2013).
const VECTOR: [number, number][] = [
  [1, 2],
  [2, 2],
  [3, 3],
  [4, 3],
  [5, 6],
  [6, 3],
  [7, 3],
  [8, 5],
  [9, 4],
  [10, 4],
  [11, 1],
  [12, 2],
];
const points = VECTOR.map(([x, y]) => ({ x, y }));
const asPairs = (ps: { x: number; y: number }[]) => ps.map((p) => [p.x, p.y]);

test('threshold 3 -> [[1,2],[5,6],[12,2]] (downsample-lttb README)', () => {
  assert.deepEqual(asPairs(lttb(points, 3)), [
    [1, 2],
    [5, 6],
    [12, 2],
  ]);
});

test('threshold 4 -> [[1,2],[5,6],[7,3],[12,2]] (derived: computed with the reference algorithm)', () => {
  assert.deepEqual(asPairs(lttb(points, 4)), [
    [1, 2],
    [5, 6],
    [7, 3],
    [12, 2],
  ]);
});

test('threshold 5 -> [[1,2],[2,2],[5,6],[11,1],[12,2]] (derived: computed with the reference algorithm)', () => {
  assert.deepEqual(asPairs(lttb(points, 5)), [
    [1, 2],
    [2, 2],
    [5, 6],
    [11, 1],
    [12, 2],
  ]);
});

test('threshold >= n or 0 returns the input unchanged (downsample-lttb-ts source, edge rule)', () => {
  assert.deepEqual(asPairs(lttb(points, 12)), VECTOR);
  assert.deepEqual(asPairs(lttb(points, 100)), VECTOR);
  assert.deepEqual(asPairs(lttb(points, 0)), VECTOR);
  assert.equal(lttb(points, 3)[1], points[4]); // the kept points are the input's own objects
});

test('columns in, columns out; tiny thresholds keep first (and last) points', () => {
  const x = Float64Array.from(VECTOR, (p) => p[0]);
  const y = Float64Array.from(VECTOR, (p) => p[1]);
  const out = lttb({ x, y }, 3);
  assert.deepEqual([...out.x], [1, 5, 12]);
  assert.deepEqual([...out.y], [2, 6, 2]);
  assert.deepEqual([...lttbIndices(x, y, 1)], [0]);
  assert.deepEqual([...lttbIndices(x, y, 2)], [0, 11]);
  assert.deepEqual(lttb([], 10), []);
});

test('agrees with the npm `downsample` package LTTB (reference library) on random series', () => {
  fc.assert(
    fc.property(
      fc.array(fc.double({ min: -1000, max: 1000, noNaN: true }), { minLength: 3, maxLength: 400 }),
      fc.integer({ min: 3, max: 120 }),
      (ys, threshold) => {
        const series = ys.map((y, i) => ({ x: i * 0.5, y }));
        const ours = lttb(series, threshold);
        const theirs = LTTB(series, threshold) as { x: number; y: number }[];
        assert.deepEqual(
          ours.map((p) => p.x),
          theirs.map((p) => p.x),
        );
      },
    ),
    { numRuns: 500 },
  );
});

test('first and last points always kept, indices ascending, exactly threshold points', () => {
  fc.assert(
    fc.property(
      fc.array(fc.double({ noNaN: true, min: -1e3, max: 1e3 }), { minLength: 1, maxLength: 300 }),
      fc.integer({ min: 1, max: 400 }),
      (ys, threshold) => {
        const x = Float64Array.from(ys, (_, i) => i);
        const idx = lttbIndices(x, Float64Array.from(ys), threshold);
        assert.equal(idx.length, Math.min(threshold, ys.length));
        assert.equal(idx[0], 0);
        if (threshold >= 2) assert.equal(idx[idx.length - 1], ys.length - 1);
        for (let k = 1; k < idx.length; k++) assert.ok(idx[k] > idx[k - 1]);
      },
    ),
  );
});
