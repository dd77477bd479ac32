/**
 * A byte-run guard placed before the readline parser: it enforces the line length cap of
 * docs/telemetry.md so a device streaming garbage without newlines cannot grow memory.
 * A run longer than `maxBytes` (plus one `\r`) is cut: its first `maxBytes` bytes go on as
 * one line, reported through `onCut`, and the rest is dropped up to the next newline.
 * At most `maxBytes + 1` bytes are held, whatever arrives.
 */
import { Transform, type TransformCallback } from 'node:stream';
import { MAX_LINE_BYTES } from '@shared/telemetry/types';

const LF = 10;
const CR = 13;
const NEWLINE = Buffer.from([LF]);

export class ByteRunGuard extends Transform {
  private readonly maxBytes: number;
  private readonly held: Buffer;
  private heldLength = 0;
  private dropping = false;
  /** Newlines passed on so far: the index of the next line the parser will emit. */
  private linesOut = 0;
  /** Line indexes that were cut, oldest first. */
  private readonly cutLines: number[] = [];
  /** Bytes dropped after cuts, for diagnostics. */
  droppedBytes = 0;

  constructor(maxBytes: number = MAX_LINE_BYTES) {
    super();
    this.maxBytes = maxBytes;
    this.held = Buffer.alloc(maxBytes + 1);
  }

  /** Whether the parser's line number `lineIndex` (0-based) was cut; call once per line, in order. */
  takeCut(lineIndex: number): boolean {
    while (this.cutLines.length > 0 && this.cutLines[0] < lineIndex) this.cutLines.shift();
    if (this.cutLines[0] === lineIndex) {
      this.cutLines.shift();
      return true;
    }
    return false;
  }

  /** Bytes held for an unfinished line (never more than maxBytes + 1). */
  get bufferedBytes(): number {
    return this.heldLength;
  }

  override _transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback): void {
    let pos = 0;
    const n = chunk.length;
    while (pos < n) {
      const nl = chunk.indexOf(LF, pos);
      if (this.dropping) {
        if (nl === -1) {
          this.droppedBytes += n - pos;
          return done();
        }
        this.droppedBytes += nl - pos;
        this.dropping = false;
        pos = nl + 1;
        continue;
      }
      if (nl === -1) {
        this.hold(chunk, pos, n);
        return done();
      }
      // A complete line: [held bytes] + chunk[pos, nl).
      const segment = nl - pos;
      const total = this.heldLength + segment;
      const lastByte =
        segment > 0 ? chunk[nl - 1] : this.heldLength > 0 ? this.held[this.heldLength - 1] : -1;
      const content = lastByte === CR ? total - 1 : total;
      if (content > this.maxBytes) {
        this.emitCut(chunk, pos);
      } else if (this.heldLength === 0) {
        this.push(chunk.subarray(pos, nl + 1));
        this.linesOut++;
      } else {
        this.push(Buffer.concat([this.held.subarray(0, this.heldLength), chunk.subarray(pos, nl + 1)]));
        this.heldLength = 0;
        this.linesOut++;
      }
      pos = nl + 1;
    }
    done();
  }

  override _flush(done: TransformCallback): void {
    if (this.heldLength > 0) {
      this.push(Buffer.concat([this.held.subarray(0, this.heldLength), NEWLINE]));
      this.heldLength = 0;
      this.linesOut++;
    }
    done();
  }

  /** Clear what is held (the port closed mid-line: the next connection starts a new line). */
  reset(): void {
    this.heldLength = 0;
    this.dropping = false;
  }

  private hold(chunk: Buffer, from: number, to: number): void {
    const room = this.held.length - this.heldLength;
    const len = to - from;
    if (len <= room) {
      chunk.copy(this.held, this.heldLength, from, to);
      this.heldLength += len;
      return;
    }
    // Longer than a line may be, with no newline in sight: cut now, drop the rest.
    chunk.copy(this.held, this.heldLength, from, from + room);
    this.heldLength += room;
    this.droppedBytes += len - room;
    this.emitCut(null, 0);
    this.dropping = true;
  }

  /**
   * Pass on the first maxBytes of the held run (topped up from `chunk` at `from`) as a cut
   * line. Like the reference framer, the cut never splits a UTF-8 sequence: it steps back
   * over up to three continuation bytes.
   */
  private emitCut(chunk: Buffer | null, from: number): void {
    const need = this.maxBytes + 1;
    const run =
      this.heldLength >= need || chunk === null
        ? this.held.subarray(0, Math.min(this.heldLength, need))
        : Buffer.concat([
            this.held.subarray(0, this.heldLength),
            chunk.subarray(from, from + need - this.heldLength),
          ]);
    let to = Math.min(this.maxBytes, run.length);
    if (run.length > this.maxBytes) {
      for (let k = 0; k < 3 && to > 0 && (run[to] & 0xc0) === 0x80; k++) to--;
      if ((run[to] & 0xc0) === 0x80) to = this.maxBytes;
    }
    const line = Buffer.concat([run.subarray(0, to), NEWLINE]);
    this.heldLength = 0;
    this.cutLines.push(this.linesOut);
    this.push(line);
    this.linesOut++;
  }
}
