import { test } from 'node:test';
import assert from 'node:assert/strict';
import fc from 'fast-check';
import { capLine, LineFramer } from '@shared/telemetry/framer';
import { MAX_LINE_BYTES } from '@shared/telemetry/types';

type Framed = [text: string, tooLong: boolean];
const enc = new TextEncoder();

function frame(chunks: (string | Uint8Array)[], maxBytes?: number): Framed[] {
  const out: Framed[] = [];
  const framer = new LineFramer((text, tooLong) => out.push([text, tooLong]), maxBytes);
  for (const c of chunks) framer.push(typeof c === 'string' ? enc.encode(c) : c);
  framer.end();
  return out;
}

/**
 * Test oracle: the docs/telemetry.md framing rules written the slow, obvious way (one
 * byte at a time, whole input at once), to compare the fast framer against.
 */
function oracle(bytes: Uint8Array, maxBytes: number): Framed[] {
  const dec = new TextDecoder();
  const out: Framed[] = [];
  let line: number[] = [];
  const flush = () => {
    if (line.length > 0 && line[line.length - 1] === 13) line.pop();
    if (line.length > maxBytes) {
      let to = maxBytes;
      for (let k = 0; k < 3 && to > 0 && (line[to] & 0xc0) === 0x80; k++) to--;
      if ((line[to] & 0xc0) === 0x80) to = maxBytes;
      out.push([dec.decode(Uint8Array.from(line.slice(0, to))), true]);
    } else out.push([dec.decode(Uint8Array.from(line)), false]);
    line = [];
  };
  for (const b of bytes) {
    if (b === 10) flush();
    else line.push(b);
  }
  if (line.length > 0) flush();
  return out;
}

test('splits at \\n and drops one \\r before it (docs/telemetry.md)', () => {
  assert.deepEqual(frame(['a=1\nb=2\r\nc=3\r\r\n']), [
    ['a=1', false],
    ['b=2', false],
    ['c=3\r', false], // only one \r is dropped; the parser rejects the other as a control byte
  ]);
  assert.deepEqual(frame(['\n\n']), [
    ['', false],
    ['', false],
  ]);
});

test('lines and \\r\\n pairs split across chunks, and a last line without newline', () => {
  assert.deepEqual(frame(['vb', 'at=8.2', '\r', '\nib', 'at=0.5\r\nt=', '1']), [
    ['vbat=8.2', false],
    ['ibat=0.5', false],
    ['t=1', false],
  ]);
});

test('UTF-8 characters split across chunks decode whole', () => {
  const bytes = enc.encode('temp=27.1°C\nnote=ünïcødé\n');
  const parts = [bytes.subarray(0, 10), bytes.subarray(10, 11), bytes.subarray(11, 20), bytes.subarray(20)];
  assert.deepEqual(frame(parts), [
    ['temp=27.1°C', false],
    ['note=ünïcødé', false],
  ]);
});

test('invalid UTF-8 becomes U+FFFD (so the parser can reject it as not-text)', () => {
  const out = frame([Uint8Array.from([0x61, 0xff, 0x62, 10])]);
  assert.deepEqual(out, [['a\ufffdb', false]]);
});

test('a line longer than the limit is cut once, flagged, and the reader resyncs at the next newline', () => {
  const long = 'x'.repeat(MAX_LINE_BYTES + 100);
  const out = frame([`${long}\nt=1\n`]);
  assert.equal(out.length, 2);
  assert.deepEqual(out[0], ['x'.repeat(MAX_LINE_BYTES), true]);
  assert.deepEqual(out[1], ['t=1', false]);
  // Exactly at the limit is fine, with or without \r.
  assert.deepEqual(frame([`${'y'.repeat(MAX_LINE_BYTES)}\r\n`]), [['y'.repeat(MAX_LINE_BYTES), false]]);
  assert.deepEqual(frame([`${'y'.repeat(MAX_LINE_BYTES + 1)}`]), [['y'.repeat(MAX_LINE_BYTES), true]]);
});

test('a 10 MB burst without newline: one cut line, memory bounded, then resync', () => {
  const chunk = new Uint8Array(65536).fill(0x41);
  const out: [length: number, tooLong: boolean][] = [];
  const framer = new LineFramer((text, tooLong) => out.push([text.length, tooLong]));
  let maxBuffered = 0;
  for (let sent = 0; sent < 10 * 1024 * 1024; sent += chunk.length) {
    framer.push(chunk);
    maxBuffered = Math.max(maxBuffered, framer.bufferedBytes);
  }
  framer.push(enc.encode('\nvbat=8.2\n'));
  framer.end();
  assert.ok(maxBuffered <= MAX_LINE_BYTES + 1, `held ${maxBuffered} bytes`); // docs/telemetry.md: lines are at most 4096 bytes
  assert.deepEqual(out, [
    [MAX_LINE_BYTES, true],
    [8, false],
  ]);
});

test('a cut never splits a UTF-8 character', () => {
  const out = frame(['aé'.repeat(10) + '\n'], 8); // a=1 byte, é=2 bytes
  assert.deepEqual(out, [['aéaéa', true]]); // 7 bytes: the 8th byte would split an é
});

test('any chunking of any bytes frames exactly like the byte-at-a-time oracle', () => {
  const byteArb = fc.oneof(
    fc.constantFrom(10, 13, 0x61, 0x3d, 0x2c, 0xc3, 0xa9, 0xe2, 0x82, 0xac, 0xf0, 0x9f, 0x98, 0x80, 0xff),
    fc.integer({ min: 0, max: 255 }),
  );
  fc.assert(
    fc.property(
      fc.array(byteArb, { maxLength: 400 }),
      fc.array(fc.integer({ min: 1, max: 50 }), { minLength: 1, maxLength: 20 }),
      fc.integer({ min: 4, max: 40 }),
      (bytesList, cuts, maxBytes) => {
        const bytes = Uint8Array.from(bytesList);
        const chunks: Uint8Array[] = [];
        let pos = 0;
        for (let k = 0; pos < bytes.length; k++) {
          const len = cuts[k % cuts.length];
          chunks.push(bytes.subarray(pos, pos + len));
          pos += len;
        }
        assert.deepEqual(frame(chunks, maxBytes), oracle(bytes, maxBytes));
      },
    ),
    { numRuns: 2000 },
  );
});

test('the byte framer (replay) frames any chunking at any memory offset like the oracle', () => {
  // Chunks are views at random offsets of larger buffers, so the four-byte newline scan meets
  // every alignment; long runs without a newline and \r\n pairs across chunk ends included.
  const byteArb = fc.oneof(
    fc.constantFrom(10, 13, 0x61, 0x3d, 0x2c, 0x0a, 0xc3, 0xa9),
    fc.integer({ min: 0, max: 255 }),
  );
  fc.assert(
    fc.property(
      fc.array(byteArb, { maxLength: 600 }),
      fc.array(fc.integer({ min: 1, max: 90 }), { minLength: 1, maxLength: 20 }),
      fc.array(fc.integer({ min: 0, max: 7 }), { minLength: 1, maxLength: 8 }),
      fc.integer({ min: 4, max: 60 }),
      (bytesList, cuts, offsets, maxBytes) => {
        const bytes = Uint8Array.from(bytesList);
        const out: Framed[] = [];
        const dec = new TextDecoder();
        const framer = LineFramer.ofBytes(
          (b, from, to, tooLong) => out.push([dec.decode(b.subarray(from, to)), tooLong]),
          maxBytes,
        );
        let pos = 0;
        for (let k = 0; pos < bytes.length; k++) {
          const len = Math.min(cuts[k % cuts.length], bytes.length - pos);
          const offset = offsets[k % offsets.length];
          const host = new Uint8Array(offset + len + 5).fill(10); // newlines around: never read
          host.set(bytes.subarray(pos, pos + len), offset);
          framer.push(host.subarray(offset, offset + len));
          pos += len;
        }
        framer.end();
        assert.deepEqual(out, oracle(bytes, maxBytes));
      },
    ),
    { numRuns: 3000 },
  );
});

test('capLine cuts strings split elsewhere at a character boundary', () => {
  assert.deepEqual(capLine('t=1'), { text: 't=1', tooLong: false });
  assert.deepEqual(capLine('é'.repeat(3000)), { text: 'é'.repeat(2048), tooLong: true }); // 2 bytes each
  assert.deepEqual(capLine('a'.repeat(4096)), { text: 'a'.repeat(4096), tooLong: false });
  assert.deepEqual(capLine('abcdef', 4), { text: 'abcd', tooLong: true });
});
