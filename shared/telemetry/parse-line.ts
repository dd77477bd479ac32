/**
 * One framed line -> one LineResult (docs/telemetry.md). The shape is detected per line:
 * `#` firmware message, key=value pairs, CSV after a header line, or one JSON object.
 * Never throws: anything that does not parse is a `rejected` result with a reason and a
 * detail a person can read.
 *
 * The hot path (plain key=value and unquoted CSV) is a hand-written scan with no
 * intermediate arrays. Quoted CSV cells go through csv-parse's browser build (its Node
 * build uses the Node `Buffer`, which the pure core may not rely on).
 */
import { parse as parseCsvSync } from 'csv-parse/browser/esm/sync';
import { thermistorTemperature } from '../chemistry/thermistor';
import { nmeaChecksum, splitChecksum } from './checksum';
import type {
  CanonicalField,
  FieldMapping,
  LineResult,
  ParserOptions,
  RejectReason,
  Sample,
  SourceKind,
} from './types';
import { MAX_LINE_BYTES } from './types';
import {
  clip as clipImport,
  IDENTITY_CONVERSION,
  keyConversion,
  parseExtraValue as parseExtraValueImport,
  parseFieldValue,
  parsePlainNumber as parsePlainNumberImport,
  scanDecimal as scanDecimalImport,
  type KeyConversion,
} from './units';

// Module-local copies of the helpers the per-line path calls: under CommonJS interop (tests,
// tsx) an imported binding is read through a getter on every use.
const clip = clipImport;
const parseExtraValue = parseExtraValueImport;
const parsePlainNumber = parsePlainNumberImport;
const scanDecimal = scanDecimalImport;

export interface LineParser {
  parse(text: string, rxS: number, tooLong?: boolean): LineResult;
  /** Forget the CSV header (a new run, a reconnect). */
  reset(): void;
  /** The CSV header in force, if any. */
  csvHeader(): readonly string[] | null;
}

export const CANONICAL_FIELDS: readonly CanonicalField[] = [
  't',
  'vbat',
  'ibat',
  'temp',
  'ntc',
  'vin',
  'iin',
  'chg',
  'flt',
  'src',
];

interface FieldHandler {
  field: CanonicalField;
  conv: KeyConversion;
  /** The profile gave this key a unit that does not fit the field. */
  profileError: string | null;
  /** Precomputed for the hot path: 0 = number, 1 = chg/flt flag, 2 = src, 3 = number with a bad profile unit. */
  kind: 0 | 1 | 2 | 3;
  /** The conversion is the identity (no unit, scale or offset): store the number as read. */
  identity: boolean;
}

function handler(field: CanonicalField, conv: KeyConversion, profileError: string | null): FieldHandler {
  const kind = field === 'chg' || field === 'flt' ? 1 : field === 'src' ? 2 : profileError !== null ? 3 : 0;
  const identity = conv.unitFactor === 1 && conv.unitOffset === 0 && conv.scale === 1 && conv.offset === 0;
  return { field, conv, profileError, kind, identity };
}

// Control characters (tab allowed), DEL, C1 controls and U+FFFD (what invalid UTF-8 decodes to).
// eslint-disable-next-line no-control-regex -- finding control characters is the point
const NOT_TEXT = /[\x00-\x08\x0a-\x1f\x7f-\x9f\ufffd]/;
const IDENTIFIER = /^[A-Za-z_][A-Za-z0-9_.-]*$/;

const NOT_TEXT_RESULT = (): LineResult =>
  reject('not-text', 'control bytes or invalid UTF-8 in the line (wrong baud rate or line noise?)');

const BLANK: LineResult = Object.freeze({ kind: 'blank' }) as LineResult;

const reject = (reason: RejectReason, detail: string): LineResult => ({ kind: 'rejected', reason, detail });

interface KeyEntry {
  key: string;
  handler: FieldHandler;
}

/**
 * A key the fast scans can meet whole: printable ASCII (its first character indexes a
 * small table) without `=`, quote or separator, which would cut a token before it ends.
 */
function isTableKey(key: string): boolean {
  if (key.length === 0) return false;
  for (let k = 0; k < key.length; k++) {
    const c = key.charCodeAt(k);
    if (c <= 32 || c >= 127 || c === 61 || c === 34 || c === 44 || c === 59) return false;
  }
  return true;
}

/** key is written at `from` in text, beyond its first character (the caller matched that). */
function restMatches(key: string, text: string, from: number): boolean {
  for (let k = 1; k < key.length; k++) if (key.charCodeAt(k) !== text.charCodeAt(from + k)) return false;
  return true;
}

function isSeparator(c: number): boolean {
  return c === 32 || c === 44 || c === 9 || c === 59; // space , tab ;
}

function buildKeyMap(fields: ParserOptions['fields']): Map<string, FieldHandler> {
  const map = new Map<string, FieldHandler>();
  if (fields !== undefined && fields !== null && typeof fields === 'object') {
    for (const field of CANONICAL_FIELDS) {
      const mapping: FieldMapping | undefined = fields[field];
      if (mapping === undefined || mapping === null || typeof mapping !== 'object') continue;
      const key = typeof mapping.key === 'string' && mapping.key.length > 0 ? mapping.key : field;
      const conv = keyConversion(field, mapping);
      map.set(
        key,
        typeof conv === 'string' ? handler(field, IDENTITY_CONVERSION, conv) : handler(field, conv, null),
      );
    }
  }
  // Canonical names are accepted directly, in their base units, unless a device key took the name.
  for (const field of CANONICAL_FIELDS) {
    if (!map.has(field)) map.set(field, handler(field, IDENTITY_CONVERSION, null));
  }
  return map;
}

/** Per-line state while a sample is being built. */
interface Build {
  sample: Sample;
  ntcIsOhm: boolean;
  error: LineResult | null;
  /** Every character so far was read by a strict scanner (known key, plain decimal, 0/1). */
  proven: boolean;
}

export function createLineParser(options: ParserOptions = {}): LineParser {
  const keyMap = buildKeyMap(options?.fields);
  const lowerKeyMap = new Map<string, FieldHandler>();
  for (const [key, handler] of keyMap) {
    const lower = key.toLowerCase();
    if (!lowerKeyMap.has(lower)) lowerKeyMap.set(lower, handler);
  }
  const thermistor = options?.thermistor;

  let header: string[] | null = null;
  let headerHandlers: (FieldHandler | null)[] = [];

  function lookup(key: string): FieldHandler | undefined {
    return keyMap.get(key) ?? lowerKeyMap.get(key.toLowerCase());
  }

  // Exact keys grouped by length, matched in place in the line (no substring, no hashing).
  const byLength: { key: string; first: number; handler: FieldHandler }[][] = [];
  for (const [key, handler] of keyMap) {
    (byLength[key.length] ??= []).push({ key, first: key.charCodeAt(0), handler });
  }

  function matchKey(s: string, from: number, to: number): FieldHandler | undefined {
    const candidates = byLength[to - from];
    if (candidates !== undefined) {
      const first = s.charCodeAt(from);
      for (let k = 0; k < candidates.length; k++) {
        const cand = candidates[k];
        if (cand.first === first && s.startsWith(cand.key, from)) return cand.handler;
      }
    }
    return undefined;
  }

  // The same keys grouped by first character, for keyBeforeEquals. Only keys the fast path
  // can meet whole are tabled; any other token takes the search for `=` and matchKey.
  const keysByFirst: KeyEntry[][] = [];
  for (const [key, handler] of keyMap) {
    if (isTableKey(key)) (keysByFirst[key.charCodeAt(0)] ??= []).push({ key, handler });
  }

  /**
   * The tabled key written at `from` and directly followed by `=`: the key=value fast path
   * finds known keys this way without searching for the `=` first.
   */
  function keyBeforeEquals(s: string, from: number): KeyEntry | undefined {
    const candidates = keysByFirst[s.charCodeAt(from)];
    if (candidates !== undefined) {
      for (let k = 0; k < candidates.length; k++) {
        const cand = candidates[k];
        // startsWith is a runtime call per key; the loop over a few characters is inlined.
        if (s.charCodeAt(from + cand.key.length) === 61 /* = */ && restMatches(cand.key, s, from))
          return cand;
      }
    }
    return undefined;
  }

  /**
   * Stores the value text[from, to) of a canonical field. The common cases (a plain decimal,
   * a 0/1 flag, a lower-case source name) are read in place; everything else goes through
   * setFromText.
   */
  function setFromRange(
    b: Build,
    h: FieldHandler,
    key: string | null,
    s: string,
    keyFrom: number,
    keyTo: number,
    from: number,
    to: number,
  ): boolean {
    const kind = h.kind;
    if (kind === 0) {
      const plain = scanDecimal(s, from, to);
      if (plain === plain) {
        const conv = h.conv;
        if (h.identity)
          setNumber(b, h.field, plain + 0, false); // + 0 turns -0 into 0, as the general path does
        else {
          const value = (plain * conv.unitFactor + conv.unitOffset) * conv.scale + conv.offset;
          setNumber(b, h.field, value, conv.unitQuantity === 'resistance');
        }
        return true;
      }
    } else if (kind === 1 && to - from === 1) {
      const c = s.charCodeAt(from);
      if (c === 48 || c === 49) {
        if (h.field === 'chg') b.sample.chg = c === 49;
        else b.sample.flt = c === 49;
        return true;
      }
    } else if (kind === 2) {
      const src = sourceInPlace(s, from, to);
      if (src !== null) {
        b.sample.src = src;
        return true;
      }
    }
    b.proven = false;
    return setFromText(b, h, key ?? s.slice(keyFrom, keyTo), s.slice(from, to));
  }

  /** Stores a canonical field from its text. Returns false (with b.error set) on a bad value. */
  function setFromText(b: Build, h: FieldHandler, key: string, raw: string): boolean {
    const field = h.field;
    if (field === 'chg' || field === 'flt') {
      const flag = parseFlag(raw);
      if (flag === null) {
        b.error = reject('bad-value', `${key}=${clip(raw)}: ${key} is 0 or 1 (or true/false)`);
        return false;
      }
      if (field === 'chg') b.sample.chg = flag;
      else b.sample.flt = flag;
      return true;
    }
    if (field === 'src') {
      const src = parseSource(raw);
      if (src === null) {
        b.error = reject('bad-value', `${key}=${clip(raw)}: ${key} is panel, adapter or none`);
        return false;
      }
      b.sample.src = src;
      return true;
    }
    if (h.profileError !== null) {
      b.error = reject('bad-unit', `${key}=${clip(raw)}: the profile's ${h.profileError}`);
      return false;
    }
    const conv = h.conv;
    const plain = parsePlainNumber(raw);
    let value: number;
    let isOhm = conv.unitQuantity === 'resistance';
    if (plain === plain) {
      value = (plain * conv.unitFactor + conv.unitOffset) * conv.scale + conv.offset;
    } else {
      const parsed = parseFieldValue(raw, field, key, conv);
      if (!parsed.ok) {
        b.error = reject(parsed.reason, parsed.detail);
        return false;
      }
      value = parsed.value;
      isOhm = parsed.quantity === 'resistance';
    }
    setNumber(b, field, value, isOhm);
    return true;
  }

  function setNumber(b: Build, field: CanonicalField, value: number, isOhm: boolean): void {
    const s = b.sample;
    switch (field) {
      case 't':
        s.deviceS = value;
        break;
      case 'vbat':
        s.vbatV = value;
        break;
      case 'ibat':
        s.ibatA = value;
        break;
      case 'temp':
        s.tempC = value;
        break;
      case 'ntc':
        s.ntcRaw = value;
        b.ntcIsOhm = isOhm;
        break;
      case 'vin':
        s.vinV = value;
        break;
      case 'iin':
        s.iinA = value;
        break;
      default:
        break;
    }
  }

  /** A JSON value of a canonical field. */
  function setFromJson(b: Build, h: FieldHandler, key: string, v: unknown): boolean {
    if (v === null) return true; // "no reading": the field is absent
    if (typeof v === 'string') return setFromText(b, h, key, v);
    const field = h.field;
    if (typeof v === 'boolean') {
      if (field === 'chg') b.sample.chg = v;
      else if (field === 'flt') b.sample.flt = v;
      else {
        b.error = reject('bad-value', `${key}=${v}: ${key} is a number`);
        return false;
      }
      return true;
    }
    if (typeof v === 'number' && Number.isFinite(v)) {
      if (field === 'chg' || field === 'flt' || field === 'src') return setFromText(b, h, key, String(v));
      if (h.profileError !== null) {
        b.error = reject('bad-unit', `${key}=${v}: the profile's ${h.profileError}`);
        return false;
      }
      const conv = h.conv;
      setNumber(
        b,
        field,
        (v * conv.unitFactor + conv.unitOffset) * conv.scale + conv.offset,
        conv.unitQuantity === 'resistance',
      );
      return true;
    }
    b.error = reject('bad-value', `${key}=${clip(JSON.stringify(v) ?? String(v))}: not a number`);
    return false;
  }

  function newBuild(rxS: number): Build {
    return { sample: { rxS, extra: {} }, ntcIsOhm: false, error: null, proven: true };
  }

  // The line being parsed, and whether it was searched for control bytes yet. The
  // search is skipped when the strict scanners have read every character anyway.
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

  /** The result of a fast path, after the control-byte search when it is still needed. */
  function checkedResult(b: Build): LineResult {
    if (!b.proven && isNotText()) return NOT_TEXT_RESULT();
    return finish(b);
  }

  function finish(b: Build): LineResult {
    if (b.error !== null) return b.error;
    const s = b.sample;
    if (s.tempC === undefined && s.ntcRaw !== undefined && thermistor !== undefined && thermistor !== null) {
      const t = thermistorTemperature(thermistor, s.ntcRaw, b.ntcIsOhm);
      // An open or shorted NTC leaves tempC unset; ntcRaw shows the reading pinned at a rail.
      if (t.ok) s.tempC = t.tempC;
    }
    return { kind: 'sample', sample: s };
  }

  /**
   * The hot path: one kind of separator, no quotes, every token `key=value`. A known key
   * is recognised where its token starts (no search for `=`), other tokens and values are
   * cut with native indexOf rather than a per-character loop. When every token was read
   * by the strict scanners (known key, plain decimal, 0/1 flag, source name) the line is
   * proven text and the control-byte search is skipped. Returns null when the line needs
   * the general scan (mixed separators, quotes, `key = value`), which then produces the
   * result or the precise rejection.
   */
  function parseKeyValueFast(s: string, rxS: number): LineResult | null {
    if (s.indexOf('"') !== -1) return null;
    const n = s.length;
    // The line's one separator: comma, tab or semicolon if present, else space.
    const hasComma = s.indexOf(',') !== -1;
    const hasTab = s.indexOf('\t') !== -1;
    const hasSemicolon = s.indexOf(';') !== -1;
    let sep = ' ';
    if (hasComma || hasTab || hasSemicolon) {
      if (+hasComma + +hasTab + +hasSemicolon > 1 || s.indexOf(' ') !== -1) return null; // mixed separators
      sep = hasComma ? ',' : hasTab ? '\t' : ';';
    }
    const sepCode = sep.charCodeAt(0);
    const b = newBuild(rxS);
    let i = 0;
    while (i < n) {
      if (s.charCodeAt(i) === sepCode) {
        i++;
        continue;
      }
      const known = keyBeforeEquals(s, i);
      if (known !== undefined) {
        // A known key holds no separator, so the value runs from its `=` to the next one.
        const eq = i + known.key.length;
        let next = s.indexOf(sep, eq + 1);
        if (next === -1) next = n;
        if (!setFromRange(b, known.handler, null, s, i, eq, eq + 1, next)) return checkedResult(b);
        i = next + 1;
        continue;
      }
      const eq = s.indexOf('=', i);
      let next = s.indexOf(sep, i);
      if (next === -1) next = n;
      if (eq <= i || eq > next) return null;
      const h = matchKey(s, i, eq);
      if (h !== undefined) {
        if (!setFromRange(b, h, null, s, i, eq, eq + 1, next)) return checkedResult(b);
      } else {
        b.proven = false;
        const key = s.slice(i, eq);
        const value = s.slice(eq + 1, next);
        const mapped = lookup(key);
        if (mapped === undefined) setExtra(b.sample.extra, key, parseExtraValue(value));
        else if (!setFromText(b, mapped, key, value)) return checkedResult(b);
      }
      i = next + 1;
    }
    return checkedResult(b);
  }

  function parseKeyValue(s: string, rxS: number): LineResult {
    const b = newBuild(rxS);
    const n = s.length;
    let i = 0;
    while (i < n) {
      let c = s.charCodeAt(i);
      while (isSeparator(c) && i < n) c = s.charCodeAt(++i);
      if (i >= n) break;
      const keyStart = i;
      while (i < n && c !== 61 && !isSeparator(c)) c = s.charCodeAt(++i);
      const keyEnd = i;
      while (i < n && (c === 32 || c === 9)) c = s.charCodeAt(++i); // allow `key = value`
      if (c !== 61 || i >= n) {
        return reject(
          'no-fields',
          `"${clip(s.slice(keyStart, keyEnd))}" is not key=value in a key=value line`,
        );
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
      const exact = matchKey(s, keyStart, keyEnd);
      if (exact !== undefined) {
        if (!setFromRange(b, exact, null, s, keyStart, keyEnd, valueStart, valueEnd))
          return b.error as LineResult;
        continue;
      }
      const key = s.slice(keyStart, keyEnd);
      const value = s.slice(valueStart, valueEnd);
      const h = lookup(key);
      if (h === undefined) setExtra(b.sample.extra, key, parseExtraValue(value));
      else if (!setFromText(b, h, key, value)) return b.error as LineResult;
    }
    return finish(b);
  }

  function parseJson(s: string, rxS: number): LineResult {
    let obj: unknown;
    try {
      obj = JSON.parse(s);
    } catch (err) {
      return reject(
        'bad-json',
        `not valid JSON (${clip(err instanceof Error ? err.message : String(err), 80)})`,
      );
    }
    if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) {
      return reject('bad-json', 'JSON that is not an object: a line holds one {"key": value, ...} object');
    }
    const b = newBuild(rxS);
    for (const key of Object.keys(obj)) {
      const v = (obj as Record<string, unknown>)[key];
      const h = lookup(key);
      if (h === undefined) {
        setExtra(b.sample.extra, key, jsonExtra(v));
      } else if (!setFromJson(b, h, key, v)) return b.error as LineResult;
    }
    return finish(b);
  }

  function splitCsv(s: string): string[] | LineResult {
    if (s.indexOf('"') === -1) {
      const cells = s.split(',');
      for (let k = 0; k < cells.length; k++) cells[k] = cells[k].trim();
      return cells;
    }
    try {
      const rows = parseCsvSync(s, { relax_column_count: true, trim: true }) as string[][];
      if (rows.length !== 1) return reject('no-fields', 'a CSV line that holds more than one record');
      return rows[0];
    } catch (err) {
      return reject(
        'no-fields',
        `CSV quoting not understood (${clip(err instanceof Error ? err.message : String(err), 80)})`,
      );
    }
  }

  /**
   * The CSV hot path: a data row under a known header, no quotes. Cells are cut with
   * indexOf and numbers read in place. Returns null to leave the line to parseCsv.
   */
  function parseCsvRowFast(s: string, rxS: number): LineResult | null {
    const cols = header;
    if (cols === null || s.indexOf('"') !== -1) return null;
    const c0 = s.charCodeAt(0);
    if ((c0 >= 65 && c0 <= 90) || (c0 >= 97 && c0 <= 122) || c0 === 95) return null; // may be a new header
    const n = s.length;
    const b = newBuild(rxS);
    let start = 0;
    let k = 0;
    for (; ; k++) {
      let end = s.indexOf(',', start);
      const next = end === -1 ? n + 1 : end + 1;
      if (end === -1) end = n;
      if (k >= cols.length) return null; // too many cells: parseCsv words the rejection
      let a = start;
      let e = end;
      while (a < e && (s.charCodeAt(a) === 32 || s.charCodeAt(a) === 9)) a++;
      while (e > a && (s.charCodeAt(e - 1) === 32 || s.charCodeAt(e - 1) === 9)) e--;
      // After a bad value keep counting cells: a wrong width is reported first, as parseCsv does.
      if (e > a && b.error === null) {
        const h = headerHandlers[k];
        if (h === null) {
          b.proven = false;
          setExtra(b.sample.extra, cols[k], parseExtraValue(s.slice(a, e)));
        } else setFromRange(b, h, cols[k], s, 0, 0, a, e);
      }
      if (next > n) break;
      start = next;
    }
    if (k + 1 !== cols.length) return null;
    return checkedResult(b);
  }

  function parseCsv(s: string, rxS: number): LineResult {
    const cells = splitCsv(s);
    if (!Array.isArray(cells)) return cells;
    if (cells.length >= 2 && cells.every((cell) => IDENTIFIER.test(cell))) {
      header = cells;
      headerHandlers = cells.map((cell) => lookup(cell) ?? null);
      return { kind: 'header', fields: cells.slice() };
    }
    if (header === null) {
      const numeric = cells.some((cell) => !Number.isNaN(parsePlainNumber(cell)));
      return numeric
        ? reject(
            'csv-no-header',
            'comma-separated values before any header line (send a line of field names first, e.g. "t,vbat,ibat")',
          )
        : reject('no-fields', 'not key=value, CSV or JSON');
    }
    if (cells.length !== header.length) {
      return reject(
        'csv-width',
        `${cells.length} cells where the header "${clip(header.join(','), 60)}" has ${header.length}`,
      );
    }
    const b = newBuild(rxS);
    for (let k = 0; k < cells.length; k++) {
      const cell = cells[k];
      if (cell.length === 0) continue; // an empty cell is a missing value
      const h = headerHandlers[k];
      if (h === null) setExtra(b.sample.extra, header[k], parseExtraValue(cell));
      else if (!setFromText(b, h, header[k], cell)) return b.error as LineResult;
    }
    return finish(b);
  }

  function parse(text: string, rxS: number, tooLong = false): LineResult {
    if (tooLong) {
      return reject(
        'line-too-long',
        `longer than ${MAX_LINE_BYTES} bytes without a newline: the start is kept in the raw record, the rest up to the next newline was skipped`,
      );
    }
    if (typeof text !== 'string') return reject('not-text', 'not a text line');
    currentText = text;
    currentChecked = false;
    let s = text.trim();
    // trim() also removes control characters such as \v and \f: look before it hides them.
    if (s.length !== text.length && isNotText()) return NOT_TEXT_RESULT();
    if (s.length === 0) return BLANK;
    if (s.charCodeAt(0) === 35 /* # */) {
      return isNotText() ? NOT_TEXT_RESULT() : { kind: 'firmware', text: s.slice(1).trim() };
    }
    if (s.length >= 3 && s.charCodeAt(s.length - 3) === 42 /* * */) {
      const split = splitChecksum(s);
      if (split.checksum === 'bad') {
        if (isNotText()) return NOT_TEXT_RESULT();
        const sent = s.slice(s.length - 2).toUpperCase();
        const computed = nmeaChecksum(s.slice(0, s.length - 3))
          .toString(16)
          .toUpperCase()
          .padStart(2, '0');
        return reject(
          'bad-checksum',
          `the line ends in *${sent} but the XOR of the text before "*" is ${computed}`,
        );
      }
      if (split.checksum === 'ok') {
        s = split.body.trim();
        if (s.length !== split.body.length && isNotText()) return NOT_TEXT_RESULT();
        if (s.length === 0) return reject('no-fields', 'a checksum with nothing before it');
      }
    }
    if (s.indexOf('=') !== -1 && s.charCodeAt(0) !== 123 /* { */) {
      const fast = parseKeyValueFast(s, rxS);
      if (fast !== null) return fast;
    } else if (s.indexOf(',') !== -1) {
      const fast = parseCsvRowFast(s, rxS);
      if (fast !== null) return fast;
    }
    // The general paths read text loosely: search for control bytes first.
    if (isNotText()) return NOT_TEXT_RESULT();
    if (s.charCodeAt(0) === 123 /* { */) return parseJson(s, rxS);
    if (s.indexOf('=') !== -1) return parseKeyValue(s, rxS);
    if (s.indexOf(',') !== -1) return parseCsv(s, rxS);
    return reject('no-fields', 'not key=value, CSV or JSON');
  }

  return {
    parse(text, rxS, tooLong) {
      try {
        return parse(text, rxS, tooLong === true);
      } catch (err) {
        // Never reached by design; a guard so that one odd line can never stop a run.
        return reject(
          'no-fields',
          `could not be parsed (${clip(err instanceof Error ? err.message : String(err), 80)})`,
        );
      }
    },
    reset() {
      header = null;
      headerHandlers = [];
    },
    csvHeader: () => header,
  };
}

function parseFlag(raw: string): boolean | null {
  if (raw === '1') return true;
  if (raw === '0') return false;
  const lower = raw.toLowerCase();
  if (lower === 'true') return true;
  if (lower === 'false') return false;
  return null;
}

/** A source name written exactly in lower case in text[from, to), read in place; else null. */
function sourceInPlace(text: string, from: number, to: number): SourceKind | null {
  const length = to - from;
  const first = text.charCodeAt(from);
  if (length === 7 && first === 97 && restMatches('adapter', text, from)) return 'adapter';
  if (length === 5 && first === 112 && restMatches('panel', text, from)) return 'panel';
  if (length === 4 && first === 110 && restMatches('none', text, from)) return 'none';
  return null;
}

function parseSource(raw: string): SourceKind | null {
  const lower = raw.toLowerCase();
  return lower === 'panel' || lower === 'adapter' || lower === 'none' ? lower : null;
}

function jsonExtra(v: unknown): number | string {
  if (typeof v === 'number') return Number.isFinite(v) ? v : String(v);
  if (typeof v === 'string') return parseExtraValue(v);
  if (typeof v === 'boolean') return v ? 1 : 0;
  return JSON.stringify(v) ?? String(v);
}

/** `extra[key] = value`, also for a key named `__proto__` (kept as data, not a prototype). */
function setExtra(extra: Record<string, number | string>, key: string, value: number | string): void {
  if (key === '__proto__')
    Object.defineProperty(extra, key, { value, enumerable: true, writable: true, configurable: true });
  else extra[key] = value;
}
