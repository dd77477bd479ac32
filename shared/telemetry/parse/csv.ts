/**
 * The CSV line shape: a header line of field names, then rows of values under it. The
 * header is the state of the shape (kept until a new header or reset). Rows without
 * quotes are cut in place (`fastRow`); quoted cells go through csv-parse's browser
 * build (its Node build uses the Node `Buffer`, which the pure core may not rely on).
 */
import { parse as parseCsvSync } from 'csv-parse/browser/esm/sync';
import type { LineResult } from '../types';
import { clip, parseExtraValue, parsePlainNumber } from '../units';
import type { FieldHandler, FieldTable } from './field-table';
import type { FieldWriter } from './field-writer';
import { reject } from './reject';

const IDENTIFIER = /^[A-Za-z_][A-Za-z0-9_.-]*$/;

export class CsvShape {
  private header: string[] | null = null;
  private handlers: (FieldHandler | null)[] = [];
  private readonly extraValue = parseExtraValue;

  constructor(
    private readonly keys: FieldTable,
    private readonly w: FieldWriter,
  ) {}

  get columns(): readonly string[] | null {
    return this.header;
  }

  reset(): void {
    this.header = null;
    this.handlers = [];
  }

  /**
   * A data row under a known header, no quotes, as many cells as the header: read into
   * the writer (already begun). False to leave the line to `general`.
   */
  fastRow(s: string): boolean {
    const cols = this.header;
    if (cols === null || s.indexOf('"') !== -1) return false;
    const c0 = s.charCodeAt(0);
    if ((c0 >= 65 && c0 <= 90) || (c0 >= 97 && c0 <= 122) || c0 === 95) return false; // may be a new header
    const w = this.w;
    const n = s.length;
    let start = 0;
    let k = 0;
    for (; ; k++) {
      let end = s.indexOf(',', start);
      const next = end === -1 ? n + 1 : end + 1;
      if (end === -1) end = n;
      if (k >= cols.length) return false; // too many cells: general words the rejection
      let a = start;
      let e = end;
      while (a < e && (s.charCodeAt(a) === 32 || s.charCodeAt(a) === 9)) a++;
      while (e > a && (s.charCodeAt(e - 1) === 32 || s.charCodeAt(e - 1) === 9)) e--;
      // After a bad value keep counting cells: a wrong width is reported first, as general does.
      if (e > a && w.error === null) {
        const h = this.handlers[k];
        if (h === null) {
          w.proven = false;
          w.extra(cols[k], this.extraValue(s.slice(a, e)));
        } else w.range(h, cols[k], s, 0, 0, a, e);
      }
      if (next > n) break;
      start = next;
    }
    return k + 1 === cols.length;
  }

  /** Any comma-separated line: a header, a row (quoted cells too), or the rejection. */
  general(s: string): LineResult {
    const cells = splitCsv(s);
    if (!Array.isArray(cells)) return cells;
    if (cells.length >= 2 && cells.every((cell) => IDENTIFIER.test(cell))) {
      this.header = cells;
      this.handlers = cells.map((cell) => this.keys.lookup(cell) ?? null);
      return { kind: 'header', fields: cells.slice() };
    }
    const header = this.header;
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
    const w = this.w;
    for (let k = 0; k < cells.length; k++) {
      const cell = cells[k];
      if (cell.length === 0) continue; // an empty cell is a missing value
      const h = this.handlers[k];
      if (h === null) w.extra(header[k], this.extraValue(cell));
      else if (!w.text(h, header[k], cell)) return w.error as LineResult;
    }
    return w.finish();
  }
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
