/**
 * The typed contract of the telemetry layer: what one received line becomes.
 * Pure types only; see docs/telemetry.md.
 */

export type SourceKind = 'panel' | 'adapter' | 'none';

/** Canonical field names of the telemetry protocol. */
export type CanonicalField = 't' | 'vbat' | 'ibat' | 'temp' | 'ntc' | 'vin' | 'iin' | 'chg' | 'flt' | 'src';

/** One parsed telemetry sample. Every physical value carries its unit in its name. */
export interface Sample {
  /** Host receive time, seconds since the Unix epoch (or a replay's synthetic clock). */
  rxS: number;
  /** Device time since its boot, seconds, when the line carried `t`. */
  deviceS?: number;
  vbatV?: number;
  ibatA?: number;
  /** Pack temperature; from `temp`, or converted from `ntc` by the profile's thermistor model. */
  tempC?: number;
  /** Raw thermistor reading as received (ADC counts or ohms), kept for diagnosis. */
  ntcRaw?: number;
  vinV?: number;
  iinA?: number;
  /** Charger's "charging" status output asserted. */
  chg?: boolean;
  /** Charger's "fault" status output asserted. */
  flt?: boolean;
  src?: SourceKind;
  /** Unknown keys, kept as extra channels. Numbers when they parse as numbers. */
  extra: Record<string, number | string>;
}

/** Why a line was not accepted. Every rejected line carries exactly one. */
export type RejectReason =
  | 'line-too-long' // more than MAX_LINE_BYTES without a newline
  | 'bad-checksum' // `*HH` present and the XOR does not match
  | 'not-text' // control bytes or invalid UTF-8 (wrong baud rate, noise)
  | 'no-fields' // nothing that looks like key=value, CSV or JSON
  | 'bad-json' // starts like JSON but does not parse to an object
  | 'bad-value' // a canonical field whose value is not a number (or 0/1, or a source name)
  | 'bad-unit' // a unit suffix that does not fit the field (e.g. `ibat=3V`)
  | 'csv-width' // CSV row whose cell count differs from the header
  | 'csv-no-header' // bare comma-separated numbers before any header line
  | 'implausible'; // a physically impossible value, or one not finite after unit conversion

/** How one device key maps onto a canonical field. */
export interface FieldMapping {
  /** The key the device prints. */
  key: string;
  /** Unit of an unsuffixed value for this key, e.g. `mV`, `mA`, `kOhm`. */
  unit?: string;
  /** Optional linear calibration applied after the unit: value * scale + offset. */
  scale?: number;
  offset?: number;
}

/** Profile `fields`: canonical field -> device key (and unit). */
export type FieldMap = Partial<Record<CanonicalField, FieldMapping>>;

/** Thermistor model of a profile (docs/profile.md). */
export type ThermistorModel =
  | {
      model: 'beta';
      r25: number;
      beta: number;
      pullupOhm?: number;
      pulldownOhm?: number;
      adcMax?: number;
    }
  | {
      model: 'steinhart-hart';
      a: number;
      b: number;
      c: number;
      pullupOhm?: number;
      pulldownOhm?: number;
      adcMax?: number;
    };

/** What the parser needs from a profile. */
export interface ParserOptions {
  fields?: FieldMap;
  thermistor?: ThermistorModel;
}

/** The outcome of parsing one framed line. */
export type LineResult =
  | { kind: 'sample'; sample: Sample }
  | { kind: 'header'; fields: string[] }
  | { kind: 'firmware'; text: string }
  | { kind: 'blank' }
  | { kind: 'rejected'; reason: RejectReason; detail: string };

/** Lines are at most this many bytes (docs/telemetry.md). */
export const MAX_LINE_BYTES = 4096;
