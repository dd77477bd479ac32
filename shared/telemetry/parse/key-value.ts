/**
 * The key=value line shape: `t=812.5 vbat=8.214 ibat=0.598 chg=1`, tokens separated by
 * spaces, commas, tabs or semicolons.
 *
 * `fast` is the hot path of live ports (`fastBytes`, the same over bytes, is replay's):
 * one pass over the characters, known keys recognised where their token starts, plain
 * decimals read while the value is scanned, no substrings and no regular expressions. It returns false when the line
 * needs `general` (quotes, `key = value`, a token without `=`), which then produces the
 * sample or the precise rejection.
 */
import { clip, parseExtraValue, quantitiesOf } from '../units';
import type { FieldTable } from './field-table';
import { storeNumber, type FieldWriter } from './field-writer';
import { reject } from './reject';
import type { LineResult, SourceKind } from '../types';

const POW10: number[] = Array.from({ length: 23 }, (_, k) => 10 ** k);

function isSeparator(c: number): boolean {
  return c === 32 || c === 44 || c === 9 || c === 59; // space , tab ;
}

// What a unit written apart from its number looks like (`8.2 V`, `598 mA`).
const UNIT_TOKEN = /^[A-Za-z°µΩ%][A-Za-z°µΩ%/]*$/;
const DIGITS = /^\d+$/;

export class KeyValueShape {
  private readonly extraValue = parseExtraValue;

  constructor(
    private readonly keys: FieldTable,
    private readonly w: FieldWriter,
  ) {}

  /**
   * Parses s into the writer (already begun). False when the line is not plain enough;
   * the writer's state is then to be discarded.
   */
  fast(s: string): boolean {
    const w = this.w;
    const keys = this.keys;
    const n = s.length;
    let i = 0;
    let pairs = 0;
    while (i < n) {
      let c = s.charCodeAt(i);
      if (isSeparator(c)) {
        i++;
        continue;
      }
      const known = keys.keyBeforeEquals(s, i);
      const keyStart = i;
      let eq: number;
      if (known !== undefined) eq = i + known.length;
      else {
        // Another key: it runs to `=`; a separator or quote first means the general scan.
        eq = i;
        while (eq < n) {
          c = s.charCodeAt(eq);
          if (c === 61) break;
          if (isSeparator(c) || c === 34) return false;
          eq++;
        }
        if (eq === n || eq === i) return false;
      }
      // The value, read as a plain decimal while it is scanned for its end.
      let k = eq + 1;
      let sign = 1;
      if (k < n) {
        c = s.charCodeAt(k);
        if (c === 45 /* - */) {
          sign = -1;
          k++;
        } else if (c === 43 /* + */) k++;
        else if (c === 34 /* " */) return false;
      }
      let mantissa = 0;
      let digits = 0;
      let fraction = -1;
      let plain = true;
      for (; k < n; k++) {
        c = s.charCodeAt(k);
        if (c >= 48 && c <= 57) {
          mantissa = mantissa * 10 + (c - 48);
          digits++;
          if (fraction >= 0) fraction++;
        } else if (c === 46 && fraction < 0) fraction = 0;
        else if (isSeparator(c)) break;
        else {
          plain = false;
          break;
        }
      }
      if (!plain) {
        for (; k < n; k++) {
          c = s.charCodeAt(k);
          if (isSeparator(c)) break;
          if (c === 34) return false;
        }
      }
      pairs++;
      if (known !== undefined) {
        const h = known.handler;
        // Up to 15 digits, integer / 10^k is one correctly rounded division of two exact
        // doubles: the same number Number() gives for the text.
        if (plain && h.kind === 0 && digits > 0 && digits <= 15 && fraction <= 22) {
          const value = sign * (fraction > 0 ? mantissa / POW10[fraction] : mantissa);
          if (w.plainNumber(h, value)) {
            i = k;
            continue;
          }
        }
        if (!w.range(h, known.key, s, keyStart, eq, eq + 1, k)) return true;
      } else if (!this.other(s, keyStart, eq, k)) return true;
      i = k;
    }
    return pairs > 0;
  }

  /**
   * `fast` over the bytes of a line as received, bytes[from, to): for the usual line of
   * printable ASCII with known keys, plain decimals, 0/1 flags and lower-case source
   * names, no string is made at all: the writer is begun here and the sample is written;
   * the caller takes it with `w.finish()`. False on anything else (another byte, an
   * unknown key, a unit, a quote), and the caller decodes the line and parses the text.
   *
   * Speed: this runs for every replayed line, so it is one loop that stores plain values
   * into `w.sample` itself (numbers through storeNumber) and tells the writer how many at
   * the end; going through a writer call per value measured about a third slower.
   */
  fastBytes(b: Uint8Array, from: number, to: number, rxS: number): boolean {
    const w = this.w;
    const keys = this.keys;
    w.begin(rxS);
    const sample = w.sample;
    let i = from;
    let pairs = 0;
    while (i < to) {
      let c = b[i];
      if (c === 32 || c === 44 || c === 9 || c === 59) {
        i++;
        continue;
      }
      // A key starts with a printable byte (a control byte is `not-text`, for the text path).
      if (c <= 32) return false;
      // The key runs to `=`. It is not checked byte by byte: only a key of the table is
      // taken, and table keys hold no separator, quote or control byte. Its last four
      // bytes are packed as it is read; for a key of 1 to 4 bytes that is the whole key,
      // found with one probe.
      let eq = i;
      let packed = 0;
      for (; eq < to; eq++) {
        c = b[eq];
        if (c === 61) break;
        packed = (packed << 8) | c;
      }
      if (eq === to || eq === i) return false;
      const known = eq - i <= 4 ? keys.shortKey(packed) : keys.keyBeforeEqualsBytes(b, i, to);
      if (known === undefined) return false;
      const h = known.handler;
      // Every value is first read as a plain decimal while it is scanned for its end.
      let k = eq + 1;
      let sign = 1;
      c = k < to ? b[k] : 0;
      if (c === 45 /* - */) {
        sign = -1;
        k++;
      } else if (c === 43 /* + */) k++;
      const digitsFrom = k;
      let mantissa = 0;
      let point = -1;
      for (; k < to; k++) {
        c = b[k];
        if (c >= 48 && c <= 57) mantissa = mantissa * 10 + (c - 48);
        else if (c === 46 && point < 0) point = k;
        else break;
      }
      const plain = k === to || c === 32 || c === 44 || c === 9 || c === 59;
      const digits = k - digitsFrom - (point < 0 ? 0 : 1);
      const fraction = point < 0 ? 0 : k - point - 1;
      switch (h.kind) {
        case 0 /* a number */: {
          // Up to 15 digits, integer / 10^k is one correctly rounded division of two
          // exact doubles: the same number Number() gives for the text. + 0 turns -0
          // into 0, as the text path does.
          if (!plain || digits === 0 || digits > 15 || fraction > 22) return false;
          const value = sign * (fraction > 0 ? mantissa / POW10[fraction] : mantissa) + 0;
          if (h.storedAsRead) storeNumber(sample, h.slot, value);
          else if (!w.plainNumber(h, value)) return false;
          break;
        }
        case 1 /* a flag */:
          // Exactly one byte, 0 or 1.
          if (k !== eq + 2 || !plain) return false;
          c = b[eq + 1];
          if (c !== 48 && c !== 49) return false;
          if (h.slot === 7) sample.chg = c === 49;
          else sample.flt = c === 49;
          break;
        case 2 /* the source */: {
          for (; k < to; k++) {
            c = b[k];
            if (c === 32 || c === 44 || c === 9 || c === 59) break;
          }
          const src = sourceInBytes(b, eq + 1, k);
          if (src === null) return false;
          sample.src = src;
          break;
        }
        default:
          return false;
      }
      pairs++;
      i = k;
    }
    w.wroteDirectly(pairs);
    return pairs > 0;
  }

  /** A key outside the table: mapped case-insensitively, else an extra channel. */
  private other(s: string, keyStart: number, eq: number, end: number): boolean {
    const w = this.w;
    w.proven = false;
    const h = this.keys.matchRange(s, keyStart, eq);
    if (h !== undefined) return w.range(h, null, s, keyStart, eq, eq + 1, end);
    const key = s.slice(keyStart, eq);
    const value = s.slice(eq + 1, end);
    const mapped = this.keys.lookup(key);
    if (mapped !== undefined) return w.text(mapped, key, value);
    w.extra(key, this.extraValue(value));
    return true;
  }

  /** Any key=value line: `key = value`, quoted values, any mix of separators. */
  general(s: string): LineResult {
    const w = this.w;
    const n = s.length;
    let i = 0;
    // The previous pair, to explain a stray token after it (`vbat=1,2`, `vbat=8.2 V`).
    let lastKey = '';
    let lastValue = '';
    while (i < n) {
      let c = s.charCodeAt(i);
      const separatorFrom = i;
      while (isSeparator(c) && i < n) c = s.charCodeAt(++i);
      if (i >= n) break;
      const separator = s.slice(separatorFrom, i);
      const keyStart = i;
      while (i < n && c !== 61 && !isSeparator(c)) c = s.charCodeAt(++i);
      const keyEnd = i;
      while (i < n && (c === 32 || c === 9)) c = s.charCodeAt(++i); // allow `key = value`
      if (c !== 61 || i >= n) {
        const stray = strayToken(s.slice(keyStart, keyEnd), lastKey, lastValue, separator);
        return reject(stray.reason, stray.detail);
      }
      if (keyEnd === keyStart)
        return reject('no-fields', `a value without a key near "${clip(s.slice(i, i + 20))}"`);
      c = s.charCodeAt(++i);
      while (i < n && (c === 32 || c === 9)) c = s.charCodeAt(++i);
      let valueStart: number;
      let valueEnd: number;
      if (c === 34 /* " */) {
        const close = s.indexOf('"', i + 1);
        valueStart = i + 1;
        valueEnd = close === -1 ? n : close;
        i = close === -1 ? n : close + 1;
      } else {
        valueStart = i;
        while (i < n && !isSeparator(c)) c = s.charCodeAt(++i);
        valueEnd = i;
      }
      lastKey = s.slice(keyStart, keyEnd);
      lastValue = s.slice(valueStart, valueEnd);
      const h = this.keys.matchRange(s, keyStart, keyEnd) ?? this.keys.lookup(lastKey);
      if (h !== undefined) {
        if (!w.text(h, lastKey, lastValue)) return w.error as LineResult;
      } else w.extra(lastKey, this.extraValue(lastValue));
    }
    return w.finish();
  }
}

/** A source name written in lower case in b[from, to), else null. */
function sourceInBytes(b: Uint8Array, from: number, to: number): SourceKind | null {
  const length = to - from;
  const first = b[from];
  if (length === 7 && first === 97 && b[from + 6] === 114 && b[from + 1] === 100) {
    // a d a p t e r
    return b[from + 2] === 97 && b[from + 3] === 112 && b[from + 4] === 116 && b[from + 5] === 101
      ? 'adapter'
      : null;
  }
  if (length === 5 && first === 112)
    return b[from + 1] === 97 && b[from + 2] === 110 && b[from + 3] === 101 && b[from + 4] === 108
      ? 'panel'
      : null;
  if (length === 4 && first === 110)
    return b[from + 1] === 111 && b[from + 2] === 110 && b[from + 3] === 101 ? 'none' : null;
  return null;
}

/** Why a token without `=` is there: a decimal comma, a unit after a space, or not key=value. */
function strayToken(
  token: string,
  lastKey: string,
  lastValue: string,
  separator: string,
): { reason: 'bad-value' | 'no-fields'; detail: string } {
  const afterNumber = lastKey !== '' && /^[-+]?\d*\.?\d+$/.test(lastValue);
  if (afterNumber && separator.trim() === ',' && DIGITS.test(token) && lastValue.indexOf('.') === -1) {
    return {
      reason: 'bad-value',
      detail:
        `${lastKey}=${lastValue},${clip(token)}: a decimal comma; write the number with a decimal point ` +
        `(${lastKey}=${lastValue}.${clip(token)}), a comma separates fields`,
    };
  }
  if (
    afterNumber &&
    separator.length > 0 &&
    separator.trim() === '' &&
    UNIT_TOKEN.test(token) &&
    quantitiesOf(token).length > 0
  ) {
    return {
      reason: 'bad-value',
      detail:
        `${lastKey}=${lastValue} ${clip(token)}: a unit after a space; write the unit joined to the number ` +
        `(${lastKey}=${lastValue}${clip(token)}), a space separates fields`,
    };
  }
  return { reason: 'no-fields', detail: `"${clip(token)}" is not key=value in a key=value line` };
}
