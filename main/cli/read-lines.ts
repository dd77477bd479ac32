/**
 * Reads a telemetry file (or standard input) into framed lines, streamed in large chunks
 * so a file of any size replays in bounded memory.
 *
 * A plain file has no receive times. Lines that carry the device time `t` are placed on
 * that clock by the pipeline; for the others a synthetic receive clock advances
 * `intervalS` (default 1 s) per line, the usual 1 Hz telemetry rate.
 */
import { createReadStream, statSync } from 'node:fs';
import { LineFramer, type ByteLineHandler } from '@shared/telemetry/framer';
import { UsageError } from './errors';

/**
 * Read size. 256 KiB chunks stay in the CPU's cache while they are framed and parsed, and
 * leave little outside the heap for the collector to wait on: a 10 M-line replay measured
 * 3.6 s and 91 MB peak RSS with them, against 4.2 s and 131–148 MB with 1 MiB chunks
 * (tests/bench/replay-bench.ts, section c).
 */
const CHUNK_BYTES = 1 << 18;

export interface TimedLine {
  text: string;
  rxS: number;
  tooLong: boolean;
}

export interface ReadOptions {
  /** Seconds between lines on the synthetic receive clock. */
  intervalS?: number;
  /** Bytes read per chunk (default 1 MiB: fewer reads, and memory stays small). */
  chunkBytes?: number;
}

/** Throws a UsageError naming the file when it cannot be read. */
export function checkReadable(path: string): void {
  if (path === '-') return;
  try {
    const stat = statSync(path);
    if (!stat.isFile()) throw new UsageError(`${path} is not a file`);
  } catch (err) {
    if (err instanceof UsageError) throw err;
    const code = (err as NodeJS.ErrnoException).code;
    throw new UsageError(
      code === 'ENOENT' ? `no such file: ${path}` : `cannot read ${path}: ${(err as Error).message}`,
    );
  }
}

/**
 * Calls onLine for every line, synchronously per chunk (the fast path used by replay).
 * Resolves with the number of lines once the input has been read to the end.
 */
export async function streamTelemetryLines(
  path: string,
  onLine: (text: string, rxS: number, tooLong: boolean) => void,
  options: ReadOptions = {},
): Promise<number> {
  checkReadable(path);
  const intervalS = options.intervalS ?? 1;
  let index = 0;
  const framer = new LineFramer((text, tooLong) => {
    onLine(text, index * intervalS, tooLong);
    index++;
  });
  const input =
    path === '-'
      ? process.stdin
      : createReadStream(path, { highWaterMark: options.chunkBytes ?? CHUNK_BYTES });
  for await (const chunk of input) {
    framer.push(chunk as Buffer);
  }
  framer.end();
  return index;
}

/** A line as bytes with its receive time; see ByteLineHandler (the bytes are not to be kept). */
export type TimedByteLine = (
  bytes: Uint8Array,
  from: number,
  to: number,
  rxS: number,
  tooLong: boolean,
) => void;

/**
 * streamTelemetryLines with each line handed over as bytes, never decoded here: the
 * replay fast path, where the parser reads the usual ASCII line without a string.
 */
export async function streamTelemetryBytes(
  path: string,
  onLine: TimedByteLine,
  options: ReadOptions = {},
): Promise<number> {
  checkReadable(path);
  const intervalS = options.intervalS ?? 1;
  let index = 0;
  const handler: ByteLineHandler = (bytes, from, to, tooLong) => {
    onLine(bytes, from, to, index * intervalS, tooLong);
    index++;
  };
  const framer = LineFramer.ofBytes(handler);
  const input =
    path === '-'
      ? process.stdin
      : createReadStream(path, { highWaterMark: options.chunkBytes ?? CHUNK_BYTES });
  for await (const chunk of input) framer.push(chunk as Buffer);
  framer.end();
  return index;
}

/** The same lines as an async iterable (for callers that await between lines). */
export async function* readTelemetryLines(path: string, options: ReadOptions = {}): AsyncIterable<TimedLine> {
  checkReadable(path);
  const intervalS = options.intervalS ?? 1;
  let index = 0;
  let batch: TimedLine[] = [];
  const framer = new LineFramer((text, tooLong) => {
    batch.push({ text, rxS: index * intervalS, tooLong });
    index++;
  });
  const input =
    path === '-'
      ? process.stdin
      : createReadStream(path, { highWaterMark: options.chunkBytes ?? CHUNK_BYTES });
  for await (const chunk of input) {
    framer.push(chunk as Buffer);
    if (batch.length) {
      const ready = batch;
      batch = [];
      yield* ready;
    }
  }
  framer.end();
  yield* batch;
}
