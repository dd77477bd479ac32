/**
 * One framed line -> one LineResult: the dispatcher of the parser. It answers what needs
 * no shape (too long, blank, a `#` firmware message, the `*HH` checksum, control bytes)
 * and hands the rest to one line shape: key=value (./parse/key-value), CSV after a
 * header (./parse/csv) or one JSON object (./parse/json). Every shape writes through the
 * one field writer (./parse/field-writer: unit conversion, plausibility of the number),
 * and the thermistor step (./parse/thermistor-step) turns a raw `ntc` into `temp`.
 * Never throws: anything that does not parse is `rejected` with a reason and a detail a
 * person can read.
 */
import { nmeaChecksum, splitChecksum } from './checksum';
import { CsvShape } from './parse/csv';
import { FieldTable } from './parse/field-table';
import { FieldWriter } from './parse/field-writer';
import { parseJsonLine } from './parse/json';
import { KeyValueShape } from './parse/key-value';
import { BLANK, notText, reject } from './parse/reject';
import type { LineResult, ParserOptions } from './types';
import { MAX_LINE_BYTES } from './types';
import { clip } from './units';

export { CANONICAL_FIELDS } from './parse/field-table';

export interface LineParser {
  parse(text: string, rxS: number, tooLong?: boolean): LineResult;
  /**
   * The same for a line still in bytes (UTF-8, as framed: no newline): bytes[from, to).
   * The usual ASCII key=value line is read without making a string; any other is decoded
   * and parsed as text. The bytes are not kept.
   */
  parseBytes(bytes: Uint8Array, from: number, to: number, rxS: number, tooLong?: boolean): LineResult;
  /** Forget the CSV header (a new run, a reconnect). */
  reset(): void;
  /** The CSV header in force, if any. */
  csvHeader(): readonly string[] | null;
}

// Control characters (tab allowed), DEL, C1 controls and U+FFFD (what invalid UTF-8 decodes to).
// eslint-disable-next-line no-control-regex -- finding control characters is the point
const NOT_TEXT = /[\x00-\x08\x0a-\x1f\x7f-\x9f\ufffd]/;

/** Printable ASCII: a line that starts and ends with it needs no trim. */
const isPrintableAscii = (c: number) => c > 32 && c < 127;

export function createLineParser(options: ParserOptions = {}): LineParser {
  const keys = new FieldTable(options?.fields);
  const writer = new FieldWriter(options?.thermistor);
  const keyValue = new KeyValueShape(keys, writer);
  const csv = new CsvShape(keys, writer);

  // The line being parsed, and whether it was searched for control bytes yet. The search
  // is skipped when the strict scanners have read every character anyway.
  let currentText = '';
  let currentChecked = false;
  let currentNotText = false;

  function isNotText(): boolean {
    if (!currentChecked) {
      currentChecked = true;
      currentNotText = NOT_TEXT.test(currentText);
    }
    return currentNotText;
  }

  /** The writer's result after a fast scan, once the control-byte search is done if still needed. */
  function checked(): LineResult {
    if (!writer.proven && isNotText()) return notText();
    return writer.finish();
  }

  function parse(text: string, rxS: number, tooLong: boolean): LineResult {
    if (tooLong) {
      return reject(
        'line-too-long',
        `longer than ${MAX_LINE_BYTES} bytes without a newline: the start is kept in the raw record, the rest up to the next newline was skipped`,
      );
    }
    if (typeof text !== 'string') return reject('not-text', 'not a text line');
    currentText = text;
    currentChecked = false;
    const n = text.length;
    if (n === 0) return BLANK;
    let s = text;
    if (!isPrintableAscii(text.charCodeAt(0)) || !isPrintableAscii(text.charCodeAt(n - 1))) {
      s = text.trim();
      // trim() also removes control characters such as \v and \f: look before it hides them.
      if (s.length !== n && isNotText()) return notText();
      if (s.length === 0) return BLANK;
    }
    const c0 = s.charCodeAt(0);
    if (c0 === 35 /* # */) return isNotText() ? notText() : { kind: 'firmware', text: s.slice(1).trim() };
    if (s.length >= 3 && s.charCodeAt(s.length - 3) === 42 /* * */) {
      const split = splitChecksum(s);
      if (split.checksum === 'bad') {
        if (isNotText()) return notText();
        const sent = s.slice(s.length - 2).toUpperCase();
        const computed = nmeaChecksum(s.slice(0, s.length - 3))
          .toString(16)
          .toUpperCase()
          .padStart(2, '0');
        return reject(
          'bad-checksum',
          `the line ends in *${sent} but the XOR of its UTF-8 bytes before "*" is ${computed}`,
        );
      }
      if (split.checksum === 'ok') {
        s = split.body.trim();
        if (s.length !== split.body.length && isNotText()) return notText();
        if (s.length === 0) return reject('no-fields', 'a checksum with nothing before it');
      }
    }
    if (s.charCodeAt(0) !== 123 /* { */) {
      writer.begin(rxS);
      if (keyValue.fast(s)) return checked();
      if (s.indexOf('=') === -1 && s.indexOf(',') !== -1) {
        writer.begin(rxS);
        if (csv.fastRow(s)) return checked();
      }
    }
    // The general paths read text loosely: search for control bytes first.
    if (isNotText()) return notText();
    writer.begin(rxS);
    if (s.charCodeAt(0) === 123 /* { */) return parseJsonLine(s, keys, writer);
    if (s.indexOf('=') !== -1) return keyValue.general(s);
    if (s.indexOf(',') !== -1) return csv.general(s);
    return reject('no-fields', 'not key=value, CSV or JSON');
  }

  const decoder = new TextDecoder('utf-8');

  function parseBytes(
    bytes: Uint8Array,
    from: number,
    to: number,
    rxS: number,
    tooLong: boolean,
  ): LineResult {
    if (!tooLong && to - from >= 3) {
      const first = bytes[from];
      const last = bytes[to - 1];
      // Printable ASCII at both ends (nothing to trim), not `#`, `{` or a `*HH` checksum.
      if (
        first > 32 &&
        first < 127 &&
        last > 32 &&
        last < 127 &&
        first !== 35 &&
        first !== 123 &&
        bytes[to - 3] !== 42
      ) {
        if (keyValue.fastBytes(bytes, from, to, rxS)) return writer.finish();
      }
    }
    return parse(from === to ? '' : decoder.decode(bytes.subarray(from, to)), rxS, tooLong);
  }

  // Never reached by design; a guard so that one odd line can never stop a run.
  const unparsable = (err: unknown): LineResult =>
    reject(
      'no-fields',
      `could not be parsed (${clip(err instanceof Error ? err.message : String(err), 80)})`,
    );

  return {
    parseBytes(bytes, from, to, rxS, tooLong) {
      try {
        return parseBytes(bytes, from, to, rxS, tooLong === true);
      } catch (err) {
        return unparsable(err);
      }
    },
    parse(text, rxS, tooLong) {
      try {
        return parse(text, rxS, tooLong === true);
      } catch (err) {
        return unparsable(err);
      }
    },
    reset: () => csv.reset(),
    csvHeader: () => csv.columns,
  };
}
