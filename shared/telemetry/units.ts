/**
 * Unit suffixes on telemetry values (docs/telemetry.md): `8214mV`, `598mA`, `0.6A`,
 * `27.1C`, `10kOhm`... Each canonical field has one base unit; a suffix converts into it,
 * and a suffix of another quantity (`ibat=3V`) is refused as `bad-unit`.
 */
import type { CanonicalField, FieldMapping } from './types';

export type Quantity =
  'time' | 'voltage' | 'current' | 'temperature' | 'resistance' | 'counts' | 'power' | 'energy' | 'charge';

/** value_in_base = value * factor + offset */
interface UnitDef {
  factor: number;
  offset: number;
}

const lin = (factor: number): UnitDef => ({ factor, offset: 0 });

// Unit spellings per quantity. Lookups are per quantity, so `K` is kelvin for a
// temperature and kilo-ohm for a resistance (the usual thermistor shorthand "10K").
const UNITS: Record<Quantity, Record<string, UnitDef>> = {
  time: { s: lin(1), sec: lin(1), ms: lin(1e-3), us: lin(1e-6), µs: lin(1e-6), min: lin(60), h: lin(3600) },
  voltage: { V: lin(1), v: lin(1), mV: lin(1e-3), mv: lin(1e-3), uV: lin(1e-6), µV: lin(1e-6), kV: lin(1e3) },
  current: { A: lin(1), a: lin(1), mA: lin(1e-3), ma: lin(1e-3), uA: lin(1e-6), µA: lin(1e-6) },
  temperature: {
    C: lin(1),
    c: lin(1),
    '°C': lin(1),
    degC: lin(1),
    K: { factor: 1, offset: -273.15 },
    F: { factor: 5 / 9, offset: (-32 * 5) / 9 },
    '°F': { factor: 5 / 9, offset: (-32 * 5) / 9 },
    degF: { factor: 5 / 9, offset: (-32 * 5) / 9 },
  },
  resistance: {
    Ohm: lin(1),
    ohm: lin(1),
    Ω: lin(1),
    R: lin(1),
    k: lin(1e3),
    K: lin(1e3),
    kOhm: lin(1e3),
    kohm: lin(1e3),
    kΩ: lin(1e3),
    M: lin(1e6),
    MOhm: lin(1e6),
    MΩ: lin(1e6),
  },
  counts: { counts: lin(1), count: lin(1), cnt: lin(1), lsb: lin(1), LSB: lin(1) },
  power: { W: lin(1), w: lin(1), mW: lin(1e-3), mw: lin(1e-3), kW: lin(1e3) },
  energy: { Wh: lin(1), mWh: lin(1e-3), kWh: lin(1e3), J: lin(1 / 3600) },
  charge: { Ah: lin(1), mAh: lin(1e-3) },
};

/** Base unit of each quantity, for messages. */
export const BASE_UNIT: Record<Quantity, string> = {
  time: 's',
  voltage: 'V',
  current: 'A',
  temperature: '°C',
  resistance: 'Ω',
  counts: 'counts',
  power: 'W',
  energy: 'Wh',
  charge: 'Ah',
};

/** Which quantities each numeric canonical field takes. `ntc` is counts or ohms. */
export const FIELD_QUANTITIES: Partial<Record<CanonicalField, readonly Quantity[]>> = {
  t: ['time'],
  vbat: ['voltage'],
  ibat: ['current'],
  temp: ['temperature'],
  ntc: ['counts', 'resistance'],
  vin: ['voltage'],
  iin: ['current'],
};

// Quantities tried, in order, for a suffix on an unknown key (extra channel).
const EXTRA_ORDER: readonly Quantity[] = [
  'voltage',
  'current',
  'power',
  'energy',
  'charge',
  'time',
  'temperature',
  'resistance',
];

export interface UnitMatch {
  quantity: Quantity;
  factor: number;
  offset: number;
}

/** Looks a unit spelling up among the given quantities, first match wins. */
export function findUnit(unit: string, quantities: readonly Quantity[]): UnitMatch | null {
  for (const quantity of quantities) {
    const def = UNITS[quantity][unit];
    if (def !== undefined) return { quantity, factor: def.factor, offset: def.offset };
  }
  return null;
}

/** Quantities a spelling could mean at all (for "`3V` is a voltage, not a current"). */
export function quantitiesOf(unit: string): Quantity[] {
  return (Object.keys(UNITS) as Quantity[]).filter((q) => UNITS[q][unit] !== undefined);
}

export type ValueParse =
  | { ok: true; value: number; quantity: Quantity | null }
  | { ok: false; reason: 'bad-value' | 'bad-unit' | 'implausible'; detail: string };

// A JS number literal (decimal, optional exponent) followed by an optional unit.
const NUMBER_WITH_UNIT = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S.*?)?\s*$/;

// What a unit suffix looks like: letters and unit signs, no digits (`0x10` is not `0` + unit).
const UNIT_WORD = /^[A-Za-z°µΩ%][A-Za-z°µΩ%/]*$/;

/** A plain decimal number, or NaN. Refuses the empty string, hex and `Infinity`. */
export function parsePlainNumber(text: string): number {
  const n = Number(text);
  if (n !== n) return n; // NaN: not a number at all, the common miss
  // Number() also accepts "", "  ", "Infinity", "0x1f", "0b1", "0o7": only decimal forms count.
  if (n === 0 && text.trim().length === 0) return NaN;
  if (n === Infinity || n === -Infinity) return NaN;
  if (text.length > 1) {
    const c = text.charCodeAt(1) | 0x20;
    if ((c === 0x78 || c === 0x62 || c === 0x6f) && /^\s*0[xbo]/i.test(text)) return NaN;
  }
  return n;
}

/**
 * Splits `8214mV` into number and unit. `unit` is '' without a suffix; null when the text
 * does not start with a number.
 */
export function splitNumberUnit(text: string): { number: number; unit: string } | null {
  const m = NUMBER_WITH_UNIT.exec(text);
  if (m === null) return null;
  return { number: Number(m[1]), unit: m[2] ?? '' };
}

/** Conversion of an unsuffixed value of one key: profile unit, then calibration. */
export interface KeyConversion {
  /** Multiply an unsuffixed value by this (profile `unit`), then add `unitOffset`. */
  unitFactor: number;
  unitOffset: number;
  /** Quantity the profile's unit names, or null when it gave none. */
  unitQuantity: Quantity | null;
  scale: number;
  offset: number;
}

export const IDENTITY_CONVERSION: KeyConversion = {
  unitFactor: 1,
  unitOffset: 0,
  unitQuantity: null,
  scale: 1,
  offset: 0,
};

/**
 * The one unit conversion of the telemetry layer: a number read with a unit (`factor`,
 * `offset` into the base unit), then the key's calibration. Every line shape and the
 * extra channels go through here.
 */
export function toBase(value: number, factor: number, offset: number, conv: KeyConversion): number {
  return (value * factor + offset) * conv.scale + conv.offset;
}

/** A value with no suffix: in the key's profile unit (or the base unit), then calibrated. */
export function unsuffixedToBase(value: number, conv: KeyConversion): number {
  return toBase(value, conv.unitFactor, conv.unitOffset, conv);
}

/** Why a converted value is refused as `implausible`: it left the range of numbers. */
export function notFiniteDetail(key: string, text: string, baseUnit: string): string {
  return (
    `${key}=${clip(text)}: not a finite number after unit conversion (beyond ±1.8e308 ${baseUnit}); ` +
    "the line is kept in the raw record, check the device's number format"
  );
}

/** Base unit of a canonical field, for messages. */
export function fieldBaseUnit(field: CanonicalField): string {
  const quantities = FIELD_QUANTITIES[field];
  return quantities === undefined ? '' : quantities.map((q) => BASE_UNIT[q]).join(' or ');
}

// A number written with a decimal comma, as some locales print it.
const DECIMAL_COMMA = /^\s*[-+]?\d+,\d+\s*$/;

/** The message for a value that is not a number, naming a decimal comma when that is the cause. */
export function notANumberDetail(key: string, text: string): string {
  if (DECIMAL_COMMA.test(text)) {
    return `${key}=${clip(text)}: a decimal comma; write the number with a decimal point (${key}=${clip(text.trim().replace(',', '.'))})`;
  }
  return `${key}=${clip(text)}: not a number`;
}

/**
 * Precomputes the conversion for one mapped key. Returns an error text when the profile's
 * unit does not fit the field (a profile mistake, reported by whoever validates profiles).
 */
export function keyConversion(
  field: CanonicalField,
  mapping: FieldMapping | undefined,
): KeyConversion | string {
  const scale = mapping?.scale ?? 1;
  const offset = mapping?.offset ?? 0;
  if (!Number.isFinite(scale) || !Number.isFinite(offset))
    return `fields.${field}: scale and offset must be finite numbers`;
  const unit = mapping?.unit;
  if (unit === undefined || unit === '') return { ...IDENTITY_CONVERSION, scale, offset };
  const quantities = FIELD_QUANTITIES[field];
  if (quantities === undefined) return `fields.${field}: this field takes no unit`;
  const match = findUnit(unit, quantities);
  if (match === null) {
    const expected = quantities.map((q) => unitNames(q)).join('; ');
    return `fields.${field}.unit "${unit}" is not a unit of this field (${expected})`;
  }
  return { unitFactor: match.factor, unitOffset: match.offset, unitQuantity: match.quantity, scale, offset };
}

/** Spellings accepted for a quantity, for messages. */
export function unitNames(quantity: Quantity): string {
  return Object.keys(UNITS[quantity]).join(', ');
}

/**
 * Parses one value of a numeric canonical field into its base unit. A suffix wins over
 * the profile's unit; calibration (`scale`, `offset`) applies either way. `quantity` says
 * what the value turned out to be (for `ntc`: counts or resistance).
 */
export function parseFieldValue(
  text: string,
  field: CanonicalField,
  key: string,
  conv: KeyConversion = IDENTITY_CONVERSION,
): ValueParse {
  let value: number;
  let quantity: Quantity | null;
  const plain = parsePlainNumber(text);
  if (!Number.isNaN(plain)) {
    value = unsuffixedToBase(plain, conv);
    quantity = conv.unitQuantity;
  } else {
    const split = splitNumberUnit(text);
    if (split === null || (split.unit !== '' && !UNIT_WORD.test(split.unit)) || Number.isNaN(split.number)) {
      return { ok: false, reason: 'bad-value', detail: notANumberDetail(key, text) };
    }
    const quantities = FIELD_QUANTITIES[field] ?? [];
    const match = split.unit === '' ? null : findUnit(split.unit, quantities);
    if (match === null && split.unit !== '') {
      const other = quantitiesOf(split.unit);
      const what = other.length > 0 ? `a ${other[0]} unit` : 'not a known unit';
      const expected = quantities.map((q) => BASE_UNIT[q]).join(' or ');
      return {
        ok: false,
        reason: 'bad-unit',
        detail: `${key}=${clip(text)}: "${split.unit}" is ${what}; ${key} is in ${expected}`,
      };
    }
    // A literal beyond the range of numbers (`1e400`) reads as Infinity: refused below.
    value =
      match === null
        ? unsuffixedToBase(split.number, conv)
        : toBase(split.number, match.factor, match.offset, conv);
    quantity = match === null ? conv.unitQuantity : match.quantity;
  }
  if (!Number.isFinite(value))
    return { ok: false, reason: 'implausible', detail: notFiniteDetail(key, text, fieldBaseUnit(field)) };
  return { ok: true, value, quantity };
}

/**
 * Value of an unknown key (extra channel): a number when it is one, a number in the base
 * unit when it carries a known unit (`pin=1200mW` -> 1.2, watts), else the text itself.
 */
export function parseExtraValue(text: string): number | string {
  const plain = parsePlainNumber(text);
  if (!Number.isNaN(plain)) return plain;
  const split = splitNumberUnit(text);
  if (split === null || split.unit === '' || !Number.isFinite(split.number)) return text;
  const match = findUnit(split.unit, EXTRA_ORDER);
  if (match === null) return text;
  const value = split.number * match.factor + match.offset;
  // Out of the range of numbers: the text is kept as written rather than an Infinity.
  return Number.isFinite(value) ? value : text;
}

/** Shortens a value for an error message. */
export function clip(text: string, max = 40): string {
  return text.length <= max ? text : `${text.slice(0, max)}…`;
}

// 10^k for k = 0..22, each exactly representable as a double.
const POW10: number[] = Array.from({ length: 23 }, (_, k) => 10 ** k);

/**
 * The number written in text[from, to) when it is a plain decimal of at most 15
 * significant digits (`-12.345`, `8`, `.5`), else NaN. For such text, integer / 10^k is
 * one correctly rounded division of two exact doubles, so the result equals Number() of
 * the same text (the classic exact fast path of decimal conversion); anything else
 * (exponents, long mantissas, units) returns NaN and goes through the general path.
 * Reads the string in place, so the hot path needs no substring.
 */
export function scanDecimal(text: string, from: number, to: number): number {
  let i = from;
  if (i >= to) return NaN;
  const sign = text.charCodeAt(i);
  const negative = sign === 45; /* - */
  if (negative || sign === 43 /* + */) {
    if (++i >= to) return NaN;
  }
  let mantissa = 0;
  let digits = 0;
  let fraction = -1; // digits after the point; -1 = no point yet
  for (; i < to; i++) {
    const c = text.charCodeAt(i);
    if (c >= 48 && c <= 57) {
      mantissa = mantissa * 10 + (c - 48);
      digits++;
      if (fraction >= 0) fraction++;
    } else if (c === 46 /* . */ && fraction < 0) {
      fraction = 0;
    } else return NaN;
  }
  if (digits === 0 || digits > 15 || fraction > 22) return NaN;
  const value = fraction > 0 ? mantissa / POW10[fraction] : mantissa;
  return negative ? -value : value;
}
