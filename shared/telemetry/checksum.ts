/**
 * NMEA 0183 style line checksum (docs/telemetry.md): `*HH` at the end of a line is the
 * 8-bit XOR of every character before the `*`, written as two hex digits. As in NMEA, a
 * leading `$` or `!` start delimiter is not part of the XOR.
 *
 * Telemetry lines are ASCII in practice; for a non-ASCII character the XOR uses its
 * UTF-16 code unit masked to 8 bits, so the function is total (never throws) but such
 * lines only verify against a device that does the same.
 */

const STAR = 42; // '*'

export type ChecksumStatus = 'ok' | 'bad' | 'none';

export interface SplitLine {
  /** The line without `*HH` and without a leading `$`/`!` when a checksum was present. */
  body: string;
  checksum: ChecksumStatus;
}

/** XOR of the characters of `body`, skipping one leading `$` or `!`. */
export function nmeaChecksum(body: string): number {
  let sum = 0;
  const first = body.charCodeAt(0);
  const start = first === 36 /* $ */ || first === 33 /* ! */ ? 1 : 0;
  for (let i = start; i < body.length; i++) sum ^= body.charCodeAt(i);
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
