import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { minMaxDecimate, minMaxIndices } from '@shared/series/min-max';

test('a one-sample spike survives decimation (the reason for min-max)', () => {
  // Invented demo series: a flat 8.20 V charge with one 9.1 V sample and one dropout to 0 V.
  const n = 100_000;
  const x = Float64Array.from({ length: n }, (_, i) => i);
  const y = new Float64Array(n).fill(8.2);
  y[31_337] = 9.1;
  y[77_777] = 0;
  const out = minMaxDecimate({ x, y }, 200);
  assert.ok(out.x.length <= 200);
  assert.ok(out.y.includes(9.1));
  assert.ok(out.y.includes(0));
  assert.ok(out.x.includes(31_337) && out.x.includes(77_777));
});

test('every bucket keeps its min and max in original order, plus the first and last points', () => {
  const points = [
    { x: 0, y: 5 },
    { x: 1, y: 9 },
    { x: 2, y: 1 },
    { x: 3, y: 4 },
    { x: 4, y: 2 },
    { x: 5, y: 8 },
    { x: 6, y: 3 },
    { x: 7, y: 7 },
    { x: 8, y: 6 },
  ];
  // threshold 6 -> (6 - 2) / 2 = 2 buckets over x in [0, 8): [0, 4) and [4, 8].
  // Interior points 1..3 -> max 9 at x=1, min 1 at x=2; 4..7 -> min 2 at x=4, max 8 at x=5.
  assert.deepEqual(
    minMaxDecimate(points, 6).map((p) => p.x),
    [0, 1, 2, 4, 5, 8],
  );
  assert.deepEqual(
    minMaxDecimate(points, 100).map((p) => p.x),
    points.map((p) => p.x),
  ); // threshold >= n: unchanged
  assert.deepEqual(
    minMaxDecimate(points, 0).map((p) => p.x),
    points.map((p) => p.x),
  );
  assert.deepEqual(minMaxDecimate([], 10), []);
});

test('gaps (NaN) are not picked as extremes; output is ascending and within the threshold', () => {
  fc.assert(
    fc.property(
      fc.array(fc.oneof(fc.double({ min: -100, max: 100, noNaN: true }), fc.constant(NaN)), {
        minLength: 1,
        maxLength: 500,
      }),
      fc.integer({ min: 1, max: 200 }),
      (ys, threshold) => {
        const x = Float64Array.from(ys, (_, i) => i * 2);
        const y = Float64Array.from(ys);
        const idx = minMaxIndices(x, y, threshold);
        assert.ok(idx.length <= Math.max(threshold, 0) || threshold >= ys.length);
        assert.equal(idx[0], 0);
        for (let k = 1; k < idx.length; k++) assert.ok(idx[k] > idx[k - 1]);
        if (threshold >= 2) assert.equal(idx[idx.length - 1], ys.length - 1);
        const interior = [...idx].filter((i) => i !== 0 && i !== ys.length - 1);
        if (threshold < ys.length) for (const i of interior) assert.ok(!Number.isNaN(ys[i]));
        // The global max and min of the interior points are always kept.
        const finite = ys
          .map((v, i) => [v, i] as const)
          .filter(([v, i]) => !Number.isNaN(v) && i > 0 && i < ys.length - 1);
        if (threshold >= 4 && threshold < ys.length && finite.length > 0) {
          const max = Math.max(...finite.map(([v]) => v));
          assert.ok(interior.some((i) => ys[i] === max));
        }
      },
    ),
    { numRuns: 1000 },
  );
});
