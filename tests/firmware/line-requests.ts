/**
 * Requests for the line CLIs (firmware/host/tl_cli.c and firmware/host/py_line_cli.py) and
 * fast-check generators of them, shared by the firmware property tests. Not a test itself.
 */
import fc from 'fast-check';

export type Shape = 'kv' | 'csv' | 'json';
export type Item =
  | { kind: 't'; key: 't'; ms: number }
  | { kind: 'm'; key: string; milli: number; decimals: number }
  | { kind: 'i'; key: string; value: number }
  | { kind: 'f'; key: string; on: boolean }
  | { kind: 'w'; key: string; word: string }
  | { kind: 'x'; key: string };

export interface Request {
  shape: Shape;
  size: number;
  items: Item[];
}

export const INT32_MIN = -2147483648;
export const INT32_MAX = 2147483647;

export function requestText(r: Request): string {
  const items = r.items.map((i) => {
    switch (i.kind) {
      case 't':
        return `t:${i.ms}`;
      case 'm':
        return `m:${i.key}:${i.milli}:${i.decimals}`;
      case 'i':
        return `i:${i.key}:${i.value}`;
      case 'f':
        return `f:${i.key}:${i.on ? 1 : 0}`;
      case 'w':
        return `w:${i.key}:${i.word}`;
      case 'x':
        return `x:${i.key}`;
    }
  });
  return [r.shape, String(r.size), ...items].join(' ');
}

// ---- generators ----

const int32 = fc.oneof(
  fc.integer({ min: INT32_MIN, max: INT32_MAX }),
  fc.constantFrom(INT32_MIN, INT32_MAX, INT32_MIN + 1, 0, 1, -1, 499, 500, -500, 4999, 5000, -50, 999_999),
);
const extraKey = fc.stringMatching(/^x[a-z0-9_.-]{0,6}$/);
const word = fc.stringMatching(/^[a-z][a-z0-9_.-]{0,8}$/);

const itemArb: fc.Arbitrary<Item> = fc.oneof(
  fc.record({
    kind: fc.constant('m' as const),
    key: fc.oneof(fc.constantFrom('vbat', 'ibat', 'temp', 'vin', 'iin'), extraKey),
    milli: int32,
    decimals: fc.integer({ min: 0, max: 4 }),
  }),
  fc.record({ kind: fc.constant('i' as const), key: fc.oneof(fc.constant('ntc'), extraKey), value: int32 }),
  fc.record({
    kind: fc.constant('f' as const),
    key: fc.oneof(fc.constantFrom('chg', 'flt'), extraKey),
    on: fc.boolean(),
  }),
  fc.oneof(
    fc.record({
      kind: fc.constant('w' as const),
      key: fc.constant('src'),
      word: fc.constantFrom('panel', 'adapter', 'none'),
    }),
    fc.record({ kind: fc.constant('w' as const), key: extraKey, word }),
  ),
  fc.record({
    kind: fc.constant('x' as const),
    key: fc.oneof(fc.constantFrom('vbat', 'temp', 'ntc'), extraKey),
  }),
);

export const requestArb: fc.Arbitrary<Request> = fc
  .record({
    shape: fc.constantFrom<Shape>('kv', 'csv', 'json'),
    size: fc.oneof(fc.constant(8192), fc.integer({ min: 0, max: 160 }), fc.integer({ min: 4090, max: 4110 })),
    time: fc.option(fc.integer({ min: 0, max: 0xffffffff }), { nil: undefined }),
    items: fc.uniqueArray(itemArb, { maxLength: 12, selector: (i) => i.key.toLowerCase() }),
  })
  .map(({ shape, size, time, items }) => {
    // A CSV row needs a number in it, or a row of words alone would read as a new header.
    const t: Item[] = time !== undefined || shape === 'csv' ? [{ kind: 't', key: 't', ms: time ?? 0 }] : [];
    return { shape, size, items: [...t, ...items] };
  });

// Lines near Taperline's limit: many whole-number extras on an 8 KiB buffer.
export const longArb: fc.Arbitrary<Request> = fc
  .record({
    shape: fc.constantFrom<Shape>('kv', 'csv', 'json'),
    n: fc.integer({ min: 400, max: 700 }),
    value: fc.integer({ min: 0, max: 99 }),
  })
  .map(({ shape, n, value }) => ({
    shape,
    size: 8192,
    items: [
      { kind: 't', key: 't', ms: 1 } as Item,
      ...Array.from({ length: n }, (_, k): Item => ({ kind: 'i', key: `k${k}`, value })),
    ],
  }));
