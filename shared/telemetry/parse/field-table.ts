/**
 * Which device key feeds which canonical field, with its unit conversion precomputed
 * once per parser (profile `fields`, else the canonical names in their base units), and
 * the lookups the line shapes use to recognise a key in place, without a substring.
 */
import type { CanonicalField, FieldMapping, ParserOptions } from '../types';
import { IDENTITY_CONVERSION, keyConversion, type KeyConversion } from '../units';

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

/**
 * How a value is stored: 0 a number, 1 a 0/1 flag (chg, flt), 2 the source name (src),
 * 3 refused (the profile's unit does not fit). Plain numbers, not an enum: the hot paths
 * compare them without reading an imported binding.
 */
export type ValueKind = 0 | 1 | 2 | 3;

/** Sample property of a field: 0 deviceS, 1 vbatV, 2 ibatA, 3 tempC, 4 ntcRaw, 5 vinV, 6 iinA, 7 chg, 8 flt, 9 src. */
export type Slot = 0 | 1 | 2 | 3 | 4 | 5 | 6 | 7 | 8 | 9;

const SLOTS: Record<CanonicalField, Slot> = {
  t: 0,
  vbat: 1,
  ibat: 2,
  temp: 3,
  ntc: 4,
  vin: 5,
  iin: 6,
  chg: 7,
  flt: 8,
  src: 9,
};

export interface FieldHandler {
  readonly field: CanonicalField;
  readonly slot: Slot;
  readonly kind: ValueKind;
  readonly conv: KeyConversion;
  /** The profile gave this key a unit that does not fit the field. */
  readonly profileError: string | null;
  /** No unit, scale or offset: a number is stored as read. */
  readonly identity: boolean;
  /** The profile's unit is a resistance (an `ntc` read in ohms, not ADC counts). */
  readonly ohm: boolean;
  /** A plain number is stored as read with nothing to note: identity, and not in ohms. */
  readonly storedAsRead: boolean;
}

function handler(field: CanonicalField, conv: KeyConversion, profileError: string | null): FieldHandler {
  const kind: ValueKind =
    field === 'chg' || field === 'flt' ? 1 : field === 'src' ? 2 : profileError !== null ? 3 : 0;
  const identity = conv.unitFactor === 1 && conv.unitOffset === 0 && conv.scale === 1 && conv.offset === 0;
  const ohm = conv.unitQuantity === 'resistance';
  return {
    field,
    slot: SLOTS[field],
    kind,
    conv,
    profileError,
    identity,
    ohm,
    storedAsRead: identity && !ohm,
  };
}

export interface KeyEntry {
  readonly key: string;
  readonly length: number;
  /** The key's character codes, compared with bytes without reading the string. */
  readonly codes: readonly number[];
  readonly handler: FieldHandler;
}

/**
 * A key the in-place scans can meet whole: printable ASCII without `=`, quote or a
 * separator, which would end a token before the key does.
 */
function isTableKey(key: string): boolean {
  if (key.length === 0) return false;
  for (let k = 0; k < key.length; k++) {
    const c = key.charCodeAt(k);
    if (c <= 32 || c >= 127 || c === 61 || c === 34 || c === 44 || c === 59) return false;
  }
  return true;
}

export class FieldTable {
  private readonly exact = new Map<string, FieldHandler>();
  private readonly lower = new Map<string, FieldHandler>();
  /** Tabled keys by their first character code. */
  private readonly byFirst: (KeyEntry[] | undefined)[] = [];
  /** Every key by length, for a key whose end is already known. */
  private readonly byLength: (KeyEntry[] | undefined)[] = [];
  /**
   * Tabled keys of 1 to 4 characters by their packed codes (c0 c1 c2 c3 as one integer;
   * every code is above 32, so the integer also says the length), in a small open-addressed
   * table: the byte scan finds `vbat` with one probe instead of comparing candidates.
   */
  private readonly shortPacked = new Int32Array(SHORT_SLOTS);
  private readonly shortEntries: (KeyEntry | undefined)[] = new Array<KeyEntry | undefined>(SHORT_SLOTS).fill(
    undefined,
  );

  constructor(fields: ParserOptions['fields']) {
    if (fields !== undefined && fields !== null && typeof fields === 'object') {
      for (const field of CANONICAL_FIELDS) {
        const mapping: FieldMapping | undefined = fields[field];
        if (mapping === undefined || mapping === null || typeof mapping !== 'object') continue;
        const key = typeof mapping.key === 'string' && mapping.key.length > 0 ? mapping.key : field;
        const conv = keyConversion(field, mapping);
        this.exact.set(
          key,
          typeof conv === 'string' ? handler(field, IDENTITY_CONVERSION, conv) : handler(field, conv, null),
        );
      }
    }
    // Canonical names are accepted directly, in their base units, unless a device key took the name.
    for (const field of CANONICAL_FIELDS) {
      if (!this.exact.has(field)) this.exact.set(field, handler(field, IDENTITY_CONVERSION, null));
    }
    for (const [key, h] of this.exact) {
      const lower = key.toLowerCase();
      if (!this.lower.has(lower)) this.lower.set(lower, h);
      const codes = Array.from(key, (_, k) => key.charCodeAt(k));
      const entry: KeyEntry = { key, length: key.length, codes, handler: h };
      (this.byLength[key.length] ??= []).push(entry);
      if (isTableKey(key)) {
        (this.byFirst[key.charCodeAt(0)] ??= []).push(entry);
        if (key.length <= 4) this.addShort(packCodes(codes), entry);
      }
    }
  }

  private addShort(packed: number, entry: KeyEntry): void {
    let slot = shortSlot(packed);
    for (let probes = 0; probes < SHORT_SLOTS; probes++, slot = (slot + 1) & (SHORT_SLOTS - 1)) {
      if (this.shortPacked[slot] === 0) {
        this.shortPacked[slot] = packed;
        this.shortEntries[slot] = entry;
        return;
      }
    }
    // Table full (more than 64 short keys): such keys are still found by keyBeforeEqualsBytes.
  }

  /** The tabled key of 1 to 4 characters whose packed codes are `packed`. */
  shortKey(packed: number): KeyEntry | undefined {
    let slot = shortSlot(packed);
    for (;;) {
      const here = this.shortPacked[slot];
      if (here === packed) return this.shortEntries[slot];
      if (here === 0) return undefined;
      slot = (slot + 1) & (SHORT_SLOTS - 1);
    }
  }

  /** The handler of a key: exact, else case-insensitive (`VBAT` is `vbat`). */
  lookup(key: string): FieldHandler | undefined {
    return this.exact.get(key) ?? this.lower.get(key.toLowerCase());
  }

  /** The handler of the key written exactly at s[from, to), read in place. */
  matchRange(s: string, from: number, to: number): FieldHandler | undefined {
    const candidates = this.byLength[to - from];
    if (candidates !== undefined) {
      for (let k = 0; k < candidates.length; k++) {
        const cand = candidates[k];
        if (sameAt(cand.key, s, from)) return cand.handler;
      }
    }
    return undefined;
  }

  /**
   * The tabled key written at `from` and directly followed by `=`: the key=value scan
   * meets known keys this way without looking for the `=` first.
   */
  keyBeforeEquals(s: string, from: number): KeyEntry | undefined {
    const candidates = this.byFirst[s.charCodeAt(from)];
    if (candidates !== undefined) {
      for (let k = 0; k < candidates.length; k++) {
        const cand = candidates[k];
        if (s.charCodeAt(from + cand.length) === 61 /* = */ && sameAt(cand.key, s, from)) return cand;
      }
    }
    return undefined;
  }

  /** keyBeforeEquals over the bytes of an ASCII line, bytes[from] being a token start before `to`. */
  keyBeforeEqualsBytes(bytes: Uint8Array, from: number, to: number): KeyEntry | undefined {
    const candidates = this.byFirst[bytes[from]];
    if (candidates !== undefined) {
      for (let k = 0; k < candidates.length; k++) {
        const cand = candidates[k];
        const eq = from + cand.length;
        if (eq < to && bytes[eq] === 61 /* = */ && sameAtBytes(cand.codes, bytes, from)) return cand;
      }
    }
    return undefined;
  }
}

const SHORT_SLOTS = 64;

/** c0 c1 c2 c3 as one integer (each code below 128, so it stays a small integer). */
function packCodes(codes: readonly number[]): number {
  let packed = 0;
  for (const c of codes) packed = packed * 256 + c;
  return packed;
}

/** Fibonacci hashing of a packed key into the 64 slots. */
function shortSlot(packed: number): number {
  return Math.imul(packed, 0x9e3779b1) >>> 26;
}

function sameAtBytes(codes: readonly number[], bytes: Uint8Array, from: number): boolean {
  for (let k = 1; k < codes.length; k++) if (codes[k] !== bytes[from + k]) return false;
  return true;
}

/** key is written at `from` in s (a short loop the compiler inlines; startsWith is a call). */
function sameAt(key: string, s: string, from: number): boolean {
  for (let k = 0; k < key.length; k++) if (key.charCodeAt(k) !== s.charCodeAt(from + k)) return false;
  return true;
}
