/**
 * The one place a value becomes part of a sample: every line shape (key=value, CSV,
 * JSON) hands its values here. Numbers go through the one unit conversion
 * (units.toBase), are refused as `implausible` when that leaves the range of numbers,
 * and land in their slot; flags and the source name are read here too. One writer is
 * reused for every line of a parser, so a line costs only its sample.
 *
 * One exception, for speed: the key=value byte scan of replay stores the values that
 * need nothing of this (a plain number with no unit or calibration, a 0/1 flag, a
 * lower-case source name) into `sample` itself, numbers through storeNumber below, and
 * reports the count with wroteDirectly.
 */
import type { LineResult, Sample, SourceKind, ThermistorModel } from '../types';
import {
  clip,
  fieldBaseUnit,
  notFiniteDetail,
  parseFieldValue,
  scanDecimal,
  unsuffixedToBase,
} from '../units';
import type { FieldHandler, Slot } from './field-table';
import { noKnownField, reject } from './reject';
import { applyThermistor } from './thermistor-step';

/**
 * A fresh sample: a plain object (its prototype is Object.prototype), made by a
 * constructor so that the engine sizes it for the fields added after it, instead of
 * growing a property store field by field on every line.
 */
const NewSample = function (this: Sample, rxS: number) {
  this.rxS = rxS;
  this.extra = {};
} as unknown as new (rxS: number) => Sample;
NewSample.prototype = Object.prototype;

const NO_SAMPLE: Sample = Object.freeze({ rxS: 0, extra: Object.freeze({}) }) as Sample;

export class FieldWriter {
  sample: Sample = NO_SAMPLE;
  /** The first bad value of the line; the line is rejected with it. */
  error: LineResult | null = null;
  /** Every character so far was read by a strict scanner (known key, plain decimal, flag, source). */
  proven = true;
  private ntcIsOhm = false;
  /** Canonical fields and extra channels with a value written so far. */
  private written = 0;

  // Module-local copies: under CommonJS interop (tests, tsx) an imported binding is read
  // through a getter on every use, and these run for every value.
  private readonly scan = scanDecimal;
  private readonly toBase = unsuffixedToBase;

  constructor(private readonly thermistor: ThermistorModel | null | undefined) {}

  begin(rxS: number): void {
    this.sample = new NewSample(rxS);
    this.error = null;
    this.proven = true;
    this.ntcIsOhm = false;
    this.written = 0;
  }

  /**
   * The value s[from, to) of a known key. The usual cases (a plain decimal, a 0/1 flag,
   * a lower-case source name) are read in place; the rest go through `text`. `key` is the
   * key's name when the caller has it, else it is cut from s[keyFrom, keyTo) for a message.
   */
  range(
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
      const plain = this.scan(s, from, to);
      if (plain === plain && this.plainNumber(h, plain)) return true;
    } else if (kind === 1 && to - from === 1) {
      const c = s.charCodeAt(from);
      if (c === 48 || c === 49) {
        this.flag(h.slot, c === 49);
        return true;
      }
    } else if (kind === 2) {
      const src = sourceInPlace(s, from, to);
      if (src !== null) {
        this.sample.src = src;
        this.written++;
        return true;
      }
    }
    this.proven = false;
    return this.text(h, key ?? s.slice(keyFrom, keyTo), s.slice(from, to));
  }

  /**
   * A plain decimal of a numeric field, in the key's unit. False (nothing stored, no
   * error) when conversion leaves the range of numbers: the caller then takes `text`,
   * which words the rejection.
   */
  plainNumber(h: FieldHandler, plain: number): boolean {
    // + 0 turns -0 into 0, as the general path does.
    const value = h.identity ? plain + 0 : this.toBase(plain, h.conv);
    if (value - value !== 0) return false; // Infinity or NaN
    this.store(h.slot, value, h.ohm);
    return true;
  }

  /** A canonical field from its text. False (with `error` set) on a bad value. */
  text(h: FieldHandler, key: string, raw: string): boolean {
    const kind = h.kind;
    if (kind === 1) {
      const flag = parseFlag(raw);
      if (flag === null)
        return this.fail(reject('bad-value', `${key}=${clip(raw)}: ${key} is 0 or 1 (or true/false)`));
      this.flag(h.slot, flag);
      return true;
    }
    if (kind === 2) {
      const lower = raw.toLowerCase();
      if (lower !== 'panel' && lower !== 'adapter' && lower !== 'none')
        return this.fail(reject('bad-value', `${key}=${clip(raw)}: ${key} is panel, adapter or none`));
      this.sample.src = lower;
      this.written++;
      return true;
    }
    if (h.profileError !== null)
      return this.fail(reject('bad-unit', `${key}=${clip(raw)}: the profile's ${h.profileError}`));
    const parsed = parseFieldValue(raw, h.field, key, h.conv);
    if (!parsed.ok) return this.fail(reject(parsed.reason, parsed.detail));
    this.store(h.slot, parsed.value, parsed.quantity === 'resistance');
    return true;
  }

  /** A JSON value of a canonical field; null means "no reading" (the field stays absent). */
  json(h: FieldHandler, key: string, v: unknown): boolean {
    if (v === null) return true;
    if (typeof v === 'string') return this.text(h, key, v);
    const kind = h.kind;
    if (typeof v === 'boolean') {
      if (kind !== 1) return this.fail(reject('bad-value', `${key}=${v}: ${key} is a number`));
      this.flag(h.slot, v);
      return true;
    }
    if (typeof v === 'number' && Number.isFinite(v)) {
      if (kind === 1 || kind === 2) return this.text(h, key, String(v));
      if (h.profileError !== null)
        return this.fail(reject('bad-unit', `${key}=${v}: the profile's ${h.profileError}`));
      if (this.plainNumber(h, v)) return true;
      return this.fail(reject('implausible', notFiniteDetail(key, String(v), fieldBaseUnit(h.field))));
    }
    return this.fail(reject('bad-value', `${key}=${clip(JSON.stringify(v) ?? String(v))}: not a number`));
  }

  /** An unknown key: an extra channel. An empty value is no channel. */
  extra(key: string, value: number | string): void {
    if (value === '') return;
    const extra = this.sample.extra;
    // A key named `__proto__` is kept as data, not as a prototype.
    if (key === '__proto__')
      Object.defineProperty(extra, key, { value, enumerable: true, writable: true, configurable: true });
    else extra[key] = value;
    this.written++;
  }

  /** The line's result: the first error, a refusal when nothing was written, else the sample. */
  finish(): LineResult {
    if (this.error !== null) return this.error;
    if (this.written === 0) return noKnownField();
    const sample = this.sample;
    applyThermistor(sample, this.ntcIsOhm, this.thermistor);
    return { kind: 'sample', sample };
  }

  private fail(result: LineResult): false {
    this.error = result;
    return false;
  }

  private flag(slot: Slot, on: boolean): void {
    if (slot === 7) this.sample.chg = on;
    else this.sample.flt = on;
    this.written++;
  }

  private store(slot: Slot, value: number, isOhm: boolean): void {
    if (slot > 6) return;
    if (slot === 4) this.ntcIsOhm = isOhm;
    storeNumber(this.sample, slot, value);
    this.written++;
  }

  /**
   * The key=value byte scan wrote `count` values into `sample` itself (plain numbers
   * through storeNumber, flags, the source), in base units with no `ntc` in ohms.
   */
  wroteDirectly(count: number): void {
    this.written = count;
  }
}

/** A number in base units into its sample property (slots 0 to 6). */
export function storeNumber(sample: Sample, slot: Slot, value: number): void {
  switch (slot) {
    case 0:
      sample.deviceS = value;
      break;
    case 1:
      sample.vbatV = value;
      break;
    case 2:
      sample.ibatA = value;
      break;
    case 3:
      sample.tempC = value;
      break;
    case 4:
      sample.ntcRaw = value;
      break;
    case 5:
      sample.vinV = value;
      break;
    case 6:
      sample.iinA = value;
      break;
  }
}

function parseFlag(raw: string): boolean | null {
  if (raw === '1') return true;
  if (raw === '0') return false;
  const lower = raw.toLowerCase();
  if (lower === 'true') return true;
  if (lower === 'false') return false;
  return null;
}

/** A source name written exactly in lower case in s[from, to), read in place; else null. */
function sourceInPlace(s: string, from: number, to: number): SourceKind | null {
  const length = to - from;
  const first = s.charCodeAt(from);
  if (length === 7 && first === 97 && s.startsWith('adapter', from)) return 'adapter';
  if (length === 5 && first === 112 && s.startsWith('panel', from)) return 'panel';
  if (length === 4 && first === 110 && s.startsWith('none', from)) return 'none';
  return null;
}
