/** The JSON line shape: one object per line, `{"t":812.5,"vbat":8.214}`. */
import type { LineResult } from '../types';
import { clip, parseExtraValue } from '../units';
import type { FieldTable } from './field-table';
import type { FieldWriter } from './field-writer';
import { reject } from './reject';

export function parseJsonLine(s: string, keys: FieldTable, w: FieldWriter): LineResult {
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
  for (const key of Object.keys(obj)) {
    const v = (obj as Record<string, unknown>)[key];
    const h = keys.lookup(key);
    if (h === undefined) w.extra(key, jsonExtra(v));
    else if (!w.json(h, key, v)) return w.error as LineResult;
  }
  return w.finish();
}

function jsonExtra(v: unknown): number | string {
  if (typeof v === 'number') return Number.isFinite(v) ? v : String(v);
  if (typeof v === 'string') return parseExtraValue(v);
  if (typeof v === 'boolean') return v ? 1 : 0;
  if (v === null) return '';
  return JSON.stringify(v) ?? String(v);
}
