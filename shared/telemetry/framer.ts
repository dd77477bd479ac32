/**
 * Splits a byte stream into telemetry lines (docs/telemetry.md): a line ends at `\n`,
 * one `\r` before it is dropped, text is UTF-8 (invalid bytes become U+FFFD, which the
 * parser rejects as `not-text`). A line is at most `maxBytes` bytes: a longer run is cut,
 * its first `maxBytes` bytes delivered once with `tooLong = true`, and the rest dropped
 * up to the next newline. Memory stays bounded by `maxBytes` whatever the input.
 *
 * Speed: newlines are found with `indexOf` on the bytes, and the complete lines of a
 * chunk are decoded with one TextDecoder call; when that string has as many characters
 * as the bytes (pure ASCII, the usual case) byte offsets equal string offsets and lines
 * are cut from it directly.
 *
 * The handler is called synchronously for each line, in order. It should not throw: an
 * exception leaves `push` at once and the rest of that chunk is lost.
 */
import { MAX_LINE_BYTES } from './types';

const LF = 10;
const CR = 13;

export type LineHandler = (text: string, tooLong: boolean) => void;

/**
 * A line as bytes, bytes[from, to), without its newline (and `\r`). The array is the
 * framer's or the chunk's: read it during the call, do not keep it.
 */
export type ByteLineHandler = (bytes: Uint8Array, from: number, to: number, tooLong: boolean) => void;

export class LineFramer {
  private readonly decoder = new TextDecoder('utf-8');
  private readonly maxBytes: number;
  /** Bytes of a line started in an earlier chunk; holds up to maxBytes + 1 (room for a `\r`). */
  private readonly pending: Uint8Array;
  private pendingLength = 0;
  /** A too-long line was delivered; drop bytes until the next newline. */
  private dropping = false;
  private linesFramed = 0;

  /** Set in byte mode: lines are handed over as bytes, never decoded here. */
  private onBytes: ByteLineHandler | null = null;

  constructor(
    private readonly onLine: LineHandler,
    maxBytes: number = MAX_LINE_BYTES,
  ) {
    this.maxBytes = Number.isInteger(maxBytes) && maxBytes > 0 ? maxBytes : MAX_LINE_BYTES;
    this.pending = new Uint8Array(this.maxBytes + 1);
  }

  /**
   * A framer that hands each line over as bytes (the replay fast path: the parser reads
   * the usual ASCII line without a string). Same cutting, `\r` and too-long rules.
   */
  static ofBytes(onBytes: ByteLineHandler, maxBytes: number = MAX_LINE_BYTES): LineFramer {
    const framer = new LineFramer(() => {}, maxBytes);
    framer.onBytes = onBytes;
    return framer;
  }

  /** Lines delivered so far (including cut ones). */
  get lines(): number {
    return this.linesFramed;
  }

  /** Bytes held for an unfinished line; never more than maxBytes + 1. */
  get bufferedBytes(): number {
    return this.pendingLength;
  }

  push(chunk: Uint8Array): void {
    const n = chunk.length;
    if (n === 0) return;
    let pos = 0;
    const firstNl = chunk.indexOf(LF);
    if (firstNl === -1) {
      this.hold(chunk, 0, n);
      return;
    }
    // The line carried over from earlier chunks ends at the first newline.
    if (this.dropping) {
      this.dropping = false;
      pos = firstNl + 1;
    } else if (this.pendingLength > 0) {
      this.finishPending(chunk, firstNl);
      pos = firstNl + 1;
    }
    const lastNl = chunk.lastIndexOf(LF);
    if (pos <= lastNl) this.emitWholeLines(chunk, pos, lastNl);
    if (lastNl + 1 < n) this.hold(chunk, lastNl + 1, n);
  }

  /** End of stream: an unterminated last line is delivered as it is. */
  end(): void {
    if (!this.dropping && this.pendingLength > 0) {
      let len = this.pendingLength;
      if (this.pending[len - 1] === CR) len--;
      this.pendingLength = 0;
      if (len > this.maxBytes) this.emitCut(this.pending, 0);
      else this.emitBytes(this.pending, 0, len);
    }
    this.pendingLength = 0;
    this.dropping = false;
  }

  /** Forget any unfinished line (after a reconnect, say). */
  reset(): void {
    this.pendingLength = 0;
    this.dropping = false;
  }

  /** Keeps the start of an unfinished line; cuts it once it is certainly too long. */
  private hold(chunk: Uint8Array, from: number, to: number): void {
    if (this.dropping) return;
    const room = this.pending.length - this.pendingLength;
    const len = to - from;
    if (len <= room) {
      this.pending.set(chunk.subarray(from, to), this.pendingLength);
      this.pendingLength += len;
      return;
    }
    // More than maxBytes + 1 bytes without a newline: too long whatever comes next.
    this.pending.set(chunk.subarray(from, from + room), this.pendingLength);
    this.pendingLength = 0;
    this.dropping = true;
    this.emitCut(this.pending, 0);
  }

  /** Completes the pending line with chunk[0, nl). */
  private finishPending(chunk: Uint8Array, nl: number): void {
    let len = this.pendingLength + nl;
    const lastByte = nl > 0 ? chunk[nl - 1] : this.pending[this.pendingLength - 1];
    if (lastByte === CR) len--;
    if (len > this.maxBytes) {
      const room = this.pending.length - this.pendingLength;
      this.pending.set(chunk.subarray(0, Math.min(nl, room)), this.pendingLength);
      this.pendingLength = 0;
      this.emitCut(this.pending, 0);
      return;
    }
    // len <= maxBytes, so the rest of the line fits in the pending buffer.
    const take = len - this.pendingLength;
    if (take > 0) this.pending.set(chunk.subarray(0, take), this.pendingLength);
    this.pendingLength = 0;
    this.emitBytes(this.pending, 0, len);
  }

  /** Lines in chunk[from, lastNl], where chunk[lastNl] is a newline. */
  private emitWholeLines(chunk: Uint8Array, from: number, lastNl: number): void {
    const onBytes = this.onBytes;
    if (onBytes !== null) {
      const newlines = new NewlineScan(chunk);
      let start = from;
      while (start <= lastNl) {
        const nl = newlines.next(start, lastNl + 1);
        let stop = nl;
        if (stop > start && chunk[stop - 1] === CR) stop--;
        if (stop - start > this.maxBytes) this.emitCut(chunk, start);
        else {
          this.linesFramed++;
          onBytes(chunk, start, stop, false);
        }
        start = nl + 1;
      }
      return;
    }
    const text = this.decoder.decode(chunk.subarray(from, lastNl + 1));
    if (text.length === lastNl + 1 - from) {
      // One character per byte: cut lines from the decoded string.
      let start = 0;
      const end = text.length;
      while (start < end) {
        const nl = text.indexOf('\n', start);
        let stop = nl;
        if (stop > start && text.charCodeAt(stop - 1) === CR) stop--;
        if (stop - start > this.maxBytes) {
          this.emitCut(chunk, from + start);
        } else {
          this.linesFramed++;
          this.onLine(text.slice(start, stop), false);
        }
        start = nl + 1;
      }
      return;
    }
    // Multi-byte characters somewhere: decode line by line from the bytes.
    let start = from;
    while (start <= lastNl) {
      const nl = chunk.indexOf(LF, start);
      let stop = nl;
      if (stop > start && chunk[stop - 1] === CR) stop--;
      if (stop - start > this.maxBytes) this.emitCut(chunk, start);
      else this.emitBytes(chunk, start, stop);
      start = nl + 1;
    }
  }

  private emitBytes(bytes: Uint8Array, from: number, to: number): void {
    this.linesFramed++;
    if (this.onBytes !== null) this.onBytes(bytes, from, to, false);
    else this.onLine(from === to ? '' : this.decoder.decode(bytes.subarray(from, to)), false);
  }

  /** Delivers the first maxBytes bytes from `from`, backed off to a character boundary. */
  private emitCut(bytes: Uint8Array, from: number): void {
    let to = from + this.maxBytes;
    // Do not split a UTF-8 sequence: step back over continuation bytes (10xxxxxx).
    for (let k = 0; k < 3 && to > from && (bytes[to] & 0xc0) === 0x80; k++) to--;
    if ((bytes[to] & 0xc0) === 0x80) to = from + this.maxBytes;
    this.linesFramed++;
    if (this.onBytes !== null) this.onBytes(bytes, from, to, true);
    else this.onLine(this.decoder.decode(bytes.subarray(from, to)), true);
  }
}

/**
 * For lines split elsewhere (a library's line parser): cuts a string to at most
 * `maxBytes` UTF-8 bytes at a character boundary and says whether it had to.
 */
export function capLine(text: string, maxBytes: number = MAX_LINE_BYTES): { text: string; tooLong: boolean } {
  // A UTF-16 code unit encodes to at most 3 bytes: short strings need no check.
  if (text.length * 3 <= maxBytes) return { text, tooLong: false };
  const buf = new Uint8Array(maxBytes);
  const { read } = encoder.encodeInto(text, buf);
  if (read >= text.length) return { text, tooLong: false };
  return { text: text.slice(0, read), tooLong: true };
}

const encoder = new TextEncoder();

/**
 * Finds newlines in a chunk four bytes at a time (a word with a 0x0A byte is spotted with
 * one subtraction and two masks, then its bytes are looked at). A per-line `indexOf` is a
 * call into C++ that costs more than scanning a usual 80-byte line this way.
 */
class NewlineScan {
  private readonly words: Int32Array;
  /** Index in the chunk of the first byte of words[0]. */
  private readonly first: number;

  constructor(private readonly chunk: Uint8Array) {
    this.first = (4 - (chunk.byteOffset & 3)) & 3;
    const count = chunk.length > this.first ? (chunk.length - this.first) >> 2 : 0;
    this.words = new Int32Array(chunk.buffer, chunk.byteOffset + this.first, count);
  }

  /** Index of the first newline in chunk[from, end), or -1. */
  next(from: number, end: number): number {
    const chunk = this.chunk;
    const first = this.first;
    let i = from;
    // Bytes before the next word boundary.
    while (i < end && (i < first || ((i - first) & 3) !== 0)) {
      if (chunk[i] === LF) return i;
      i++;
    }
    const words = this.words;
    const lastWord = Math.min(words.length, (end - first) >> 2);
    for (let w = (i - first) >> 2; w < lastWord; w++) {
      const x = words[w] ^ 0x0a0a0a0a;
      // Non-zero exactly when some byte of x is zero, i.e. some byte of the word is 0x0A.
      if (((x - 0x01010101) & ~x & 0x80808080) !== 0) {
        const at = first + (w << 2);
        for (let k = at; k < at + 4; k++) if (chunk[k] === LF) return k;
      }
    }
    for (i = Math.max(i, first + (lastWord << 2)); i < end; i++) if (chunk[i] === LF) return i;
    return -1;
  }
}
