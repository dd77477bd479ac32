/**
 * NMEA 0183 style line checksum: `*HH` at the end of a line is the 8-bit XOR of every
 * byte before the `*`, written as two hex digits. As in NMEA, a leading `$` or `!` start
 * delimiter is not part of the XOR.
 *
 * The bytes are the line's UTF-8 bytes, as the device sent them: a line carrying `°C`
 * (C2 B0 43) or `Ω` (CE A9) is summed byte by byte, not by its UTF-16 code units. The
 * string is encoded on the fly (no buffer); a lone surrogate counts as U+FFFD, as
 * TextEncoder would encode it.
 */

const STAR = 42; // '*'

export type ChecksumStatus = 'ok' | 'bad' | 'none';

export interface SplitLine {
  /** The line without `*HH` and without a leading `$`/`!` when a checksum was present. */
  body: string;
  checksum: ChecksumStatus;
}

/** XOR of the UTF-8 bytes of `body`, skipping one leading `$` or `!`. */
export function nmeaChecksum(body: string): number {
  let sum = 0;
  const first = body.charCodeAt(0);
  const start = first === 36 /* $ */ || first === 33 /* ! */ ? 1 : 0;
  const n = body.length;
  for (let i = start; i < n; i++) {
    let c = body.charCodeAt(i);
    if (c < 0x80) sum ^= c;
    else if (c < 0x800) sum ^= (0xc0 | (c >> 6)) ^ (0x80 | (c & 0x3f));
    else {
      if (c >= 0xd800 && c <= 0xdbff && i + 1 < n) {
        const low = body.charCodeAt(i + 1);
        if (low >= 0xdc00 && low <= 0xdfff) {
          const cp = 0x10000 + ((c - 0xd800) << 10) + (low - 0xdc00);
          sum ^=
            (0xf0 | (cp >> 18)) ^
            (0x80 | ((cp >> 12) & 0x3f)) ^
            (0x80 | ((cp >> 6) & 0x3f)) ^
            (0x80 | (cp & 0x3f));
          i++;
          continue;
        }
      }
      if (c >= 0xd800 && c <= 0xdfff) c = 0xfffd; // a lone surrogate
      sum ^= (0xe0 | (c >> 12)) ^ (0x80 | ((c >> 6) & 0x3f)) ^ (0x80 | (c & 0x3f));
    }
  }
  return sum & 0xff;
}

function hexDigit(code: number): number {
  if (code >= 48 && code <= 57) return code - 48; // 0-9
  if (code >= 65 && code <= 70) return code - 55; // A-F
  if (code >= 97 && code <= 102) return code - 87; // a-f (accepted on input)
  return -1;
}

/**
 * Splits a trailing `*HH` off a line and checks it. A line without one is `none`, and its
 * body is the line unchanged.
 */
export function splitChecksum(line: string): SplitLine {
  const n = line.length;
  if (n < 3 || line.charCodeAt(n - 3) !== STAR) return { body: line, checksum: 'none' };
  const hi = hexDigit(line.charCodeAt(n - 2));
  const lo = hexDigit(line.charCodeAt(n - 1));
  if (hi < 0 || lo < 0) return { body: line, checksum: 'none' };
  const withDelimiter = line.slice(0, n - 3);
  const sent = hi * 16 + lo;
  const checksum: ChecksumStatus = nmeaChecksum(withDelimiter) === sent ? 'ok' : 'bad';
  const first = withDelimiter.charCodeAt(0);
  const body = first === 36 || first === 33 ? withDelimiter.slice(1) : withDelimiter;
  return { body, checksum };
}

/** `body*HH`, with upper-case hex digits as NMEA prints them. */
export function appendChecksum(body: string): string {
  const sum = nmeaChecksum(body);
  return `${body}*${sum.toString(16).toUpperCase().padStart(2, '0')}`;
}
