/**
 * The serial framing chain (byte-run guard + @serialport/parser-readline) against the
 * project's reference framer (shared/telemetry/framer.ts, docs/telemetry.md): for any
 * bytes in any chunking, both give the same lines and the same cut flags.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { ReadlineParser } from '@serialport/parser-readline';
import fc from 'fast-check';
import { LineFramer } from '@shared/telemetry/framer';
import { MAX_LINE_BYTES } from '@shared/telemetry/types';
import { ByteRunGuard } from '../../main/serial';

type Line = [string, boolean];

/** Runs chunks through guard + readline as the serial source wires them. */
async function viaSerialChain(
  chunks: Uint8Array[],
  maxBytes?: number,
): Promise<{ lines: Line[]; maxHeld: number }> {
  const guard = new ByteRunGuard(maxBytes);
  const parser = new ReadlineParser({ delimiter: '\n', encoding: undefined, readableObjectMode: true });
  const decoder = new TextDecoder('utf-8');
  const lines: Line[] = [];
  let index = 0;
  let maxHeld = 0;
  parser.on('data', (b: Buffer) => {
    const cut = guard.takeCut(index++);
    let text = decoder.decode(b);
    if (!cut && text.endsWith('\r')) text = text.slice(0, -1);
    lines.push([text, cut]);
  });
  guard.pipe(parser);
  for (const c of chunks) {
    guard.write(Buffer.from(c));
    maxHeld = Math.max(maxHeld, guard.bufferedBytes);
  }
  // Never ended: a serial port does not end its stream (and readline would flush an empty line).
  for (let i = 0; i < 5; i++) await new Promise((r) => setImmediate(r));
  return { lines, maxHeld };
}

function viaReferenceFramer(chunks: Uint8Array[], maxBytes?: number): Line[] {
  const lines: Line[] = [];
  const framer = new LineFramer((text, tooLong) => lines.push([text, tooLong]), maxBytes);
  for (const c of chunks) framer.push(c);
  return lines;
}

// Bytes biased towards newlines, carriage returns and UTF-8 lead/continuation bytes.
const byte = fc.oneof(
  fc.constant(10),
  fc.constant(13),
  fc.integer({ min: 32, max: 126 }),
  fc.integer({ min: 0, max: 255 }),
  fc.constantFrom(0xc3, 0xa9, 0xe2),
);

test('same lines as the reference framer for random bytes in random chunks (small cap)', async () => {
  await fc.assert(
    fc.asyncProperty(
      fc.array(
        fc.array(byte, { maxLength: 40 }).map((a) => Uint8Array.from(a)),
        { maxLength: 12 },
      ),
      async (chunks) => {
        // Every test input ends in a newline: the serial chain never sees an end of stream.
        const all = [...chunks, Uint8Array.from([10])];
        const { lines, maxHeld } = await viaSerialChain(all, 16);
        assert.deepEqual(lines, viaReferenceFramer(all, 16));
        assert.ok(maxHeld <= 17);
      },
    ),
    { numRuns: 400 },
  );
});

test('a 10 MB run without newline is one cut line of MAX_LINE_BYTES, memory held stays under 4097 bytes', async () => {
  const chunk = new Uint8Array(64 * 1024).fill(0x41);
  const chunks: Uint8Array[] = [];
  for (let i = 0; i < 160; i++) chunks.push(chunk);
  chunks.push(new TextEncoder().encode('\nt=1 vbat=8.2\n'));
  const { lines, maxHeld } = await viaSerialChain(chunks);
  // docs/telemetry.md: at most 4096 bytes per line; the cut is delivered once, then resync at the newline.
  assert.equal(MAX_LINE_BYTES, 4096);
  assert.deepEqual(lines, [
    ['A'.repeat(4096), true],
    ['t=1 vbat=8.2', false],
  ]);
  assert.ok(maxHeld <= MAX_LINE_BYTES + 1);
});

test('a line of exactly 4096 bytes plus \\r\\n is whole; 4097 bytes is cut', async () => {
  const exact = new TextEncoder().encode('B'.repeat(4096) + '\r\n');
  const over = new TextEncoder().encode('C'.repeat(4097) + '\n');
  const { lines } = await viaSerialChain([exact.subarray(0, 4096), exact.subarray(4096), over]);
  assert.deepEqual(lines, [
    ['B'.repeat(4096), false],
    ['C'.repeat(4096), true],
  ]);
});
