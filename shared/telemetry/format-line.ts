/**
 * Prints telemetry lines in the three shapes of docs/telemetry.md. This is the one
 * implementation of printing them: the simulator and the tests use it, and the parser
 * reads back exactly what it prints.
 */
import { stringify as stringifyCsvSync } from 'csv-stringify/browser/esm/sync';
import { appendChecksum } from './checksum';

export type LineShape = 'kv' | 'csv' | 'json';
export type LineValue = number | string | boolean;

export interface FormatOptions {
  /** Append an NMEA style `*HH` checksum. */
  checksum?: boolean;
  /** Fixed decimals per key (e.g. `{ vbat: 3 }`); other numbers print in shortest form. */
  digits?: Partial<Record<string, number>>;
}

function formatNumber(value: number, digits: number | undefined): string {
  if (
    digits !== undefined &&
    Number.isInteger(digits) &&
    digits >= 0 &&
    digits <= 20 &&
    Number.isFinite(value)
  ) {
    return value.toFixed(digits);
  }
  return String(value);
}

function cellText(key: string, value: LineValue, digits: FormatOptions['digits']): string {
  if (typeof value === 'boolean') return value ? '1' : '0';
  if (typeof value === 'number') return formatNumber(value, digits?.[key]);
  return value;
}

// A key=value text value needs quotes when it holds a separator, a quote or nothing at all.
const NEEDS_QUOTES = /[\s,;="]|^$/;

function kvValue(text: string): string {
  if (!NEEDS_QUOTES.test(text)) return text;
  // The line format has no escape for `"`: it becomes `'` so the line still reads back.
  return `"${text.replace(/"/g, "'")}"`;
}

function csvRow(cells: string[]): string {
  if (
    cells.every(
      (c) => c.indexOf(',') === -1 && c.indexOf('"') === -1 && c.indexOf('\n') === -1 && c.trim() === c,
    )
  ) {
    return cells.join(',');
  }
  // Quoting per RFC 4180 is the CSV library's job.
  return stringifyCsvSync([cells], { record_delimiter: '\n', quoted_match: /^\s|\s$/ }).replace(/\n$/, '');
}

/**
 * One telemetry line, without its newline. Keys print in the order of `values`.
 * `csv` prints only the data row: print `csvHeaderLine(Object.keys(values))` first.
 * Booleans print as 1/0 (the `chg`/`flt` convention). A non-finite number prints as
 * `NaN`/`Infinity` in kv and CSV, `null` in JSON, and the parser rejects or skips it.
 */
export function formatTelemetryLine(
  values: Record<string, LineValue>,
  shape: LineShape,
  options: FormatOptions = {},
): string {
  const keys = Object.keys(values);
  const digits = options.digits;
  let body: string;
  if (shape === 'json') {
    const out: Record<string, number | string | boolean> = {};
    for (const key of keys) {
      const v = values[key];
      const d = digits?.[key];
      // Number(toFixed) keeps the chosen decimals without trailing noise in JSON.
      out[key] =
        typeof v === 'number' && d !== undefined
          ? Number(formatNumber(v, d))
          : typeof v === 'boolean'
            ? v
              ? 1
              : 0
            : v;
    }
    body = JSON.stringify(out);
  } else if (shape === 'csv') {
    body = csvRow(keys.map((key) => cellText(key, values[key], digits)));
  } else {
    let line = '';
    for (const key of keys) {
      const text = cellText(key, values[key], digits);
      line += `${line.length === 0 ? '' : ' '}${key}=${kvValue(text)}`;
    }
    body = line;
  }
  return options.checksum === true ? appendChecksum(body) : body;
}

/** The header line that introduces CSV rows (field names, comma-separated). */
export function csvHeaderLine(keys: readonly string[], options: { checksum?: boolean } = {}): string {
  const body = csvRow([...keys]);
  return options.checksum === true ? appendChecksum(body) : body;
}
