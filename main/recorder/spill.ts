/**
 * Rows the recorder could not write when it closed (a full disk at Ctrl-C) go to a spill
 * file: NDJSON, next to the database, else in the system's temporary folder. The next open
 * of the same database imports every spill file that names it and deletes it. Nothing that
 * was received is dropped silently.
 *
 * Format: a header line `{"taperline":"spill","version":1,"db":…,"createdAt":…,"reason":…,"rows":N}`,
 * then one object per line: `{"op":…}` (a queued write), `{"totals":[runId,…]}`, `{"lastRx":[runId,rxS]}`.
 * Non-finite numbers (empty rollup slots hold ±Infinity) are written as `{"$num":"Infinity"}`.
 */
import { closeSync, fsyncSync, openSync, readdirSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, dirname, join, resolve } from 'node:path';

export interface SpillContent<Op, Totals> {
  ops: Op[];
  totals: Array<[number, Totals]>;
  lastRx: Array<[number, number]>;
}

export type SpillResult = { path: string; rows: number } | { path: null; rows: number; error: string };

interface Header {
  taperline: 'spill';
  version: 1;
  db: string;
  createdAt: string;
  reason: string;
  rows: number;
}

const replacer = (_key: string, value: unknown) =>
  typeof value === 'number' && !Number.isFinite(value) ? { $num: String(value) } : value;

function reviver(_key: string, value: unknown): unknown {
  if (value && typeof value === 'object' && !Array.isArray(value)) {
    const keys = Object.keys(value);
    if (keys.length === 1 && keys[0] === '$num') return Number((value as { $num: string }).$num);
  }
  return value;
}

function spillName(dbPath: string, stamp: string): string {
  return `${basename(dbPath)}.spill-${stamp}-${process.pid}.ndjson`;
}

function writeTo<Op, Totals>(path: string, header: Header, content: SpillContent<Op, Totals>): void {
  const fd = openSync(path, 'wx');
  try {
    let chunk = `${JSON.stringify(header)}\n`;
    const put = (record: unknown) => {
      chunk += `${JSON.stringify(record, replacer)}\n`;
      if (chunk.length >= 1 << 20) {
        writeSync(fd, chunk);
        chunk = '';
      }
    };
    for (const op of content.ops) put({ op });
    for (const t of content.totals) put({ totals: t });
    for (const r of content.lastRx) put({ lastRx: r });
    writeSync(fd, chunk);
    fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

/** Write the unwritten rows; returns where, or why nowhere. */
export function writeSpill<Op, Totals>(
  dbPath: string,
  content: SpillContent<Op, Totals>,
  reason: string,
): SpillResult {
  const rows = content.ops.length;
  const db = resolve(dbPath);
  const stamp = new Date().toISOString().replace(/[:.]/g, '-');
  const header: Header = {
    taperline: 'spill',
    version: 1,
    db,
    createdAt: new Date().toISOString(),
    reason,
    rows,
  };
  const errors: string[] = [];
  // Next to the database first (found again without a search); the temporary folder is often
  // another file system, so it may have room when the database's disk has none.
  for (const dir of [dirname(db), tmpdir()]) {
    const path = join(dir, spillName(db, stamp));
    try {
      writeTo(path, header, content);
      return { path, rows };
    } catch (err) {
      rmSync(path, { force: true });
      errors.push(`${path}: ${err instanceof Error ? err.message : String(err)}`);
    }
  }
  return { path: null, rows, error: errors.join('; ') };
}

/** Spill files that belong to this database, oldest first. */
export function findSpills(dbPath: string): string[] {
  const db = resolve(dbPath);
  const prefix = `${basename(db)}.spill-`;
  const found: string[] = [];
  for (const dir of [dirname(db), tmpdir()]) {
    let names: string[];
    try {
      names = readdirSync(dir);
    } catch {
      continue;
    }
    for (const name of names) {
      if (!name.startsWith(prefix) || !name.endsWith('.ndjson')) continue;
      const path = join(dir, name);
      try {
        const first = readFileSync(path, 'utf8').split('\n', 1)[0];
        const header = JSON.parse(first) as Partial<Header>;
        if (header.taperline === 'spill' && header.db === db) found.push(path);
      } catch {
        // Not a spill file of ours.
      }
    }
  }
  return found.sort((a, b) => basename(a).localeCompare(basename(b)));
}

export function readSpill<Op, Totals>(path: string): SpillContent<Op, Totals> {
  const content: SpillContent<Op, Totals> = { ops: [], totals: [], lastRx: [] };
  const lines = readFileSync(path, 'utf8').split('\n');
  for (let i = 1; i < lines.length; i++) {
    if (lines[i] === '') continue;
    const record = JSON.parse(lines[i], reviver) as {
      op?: Op;
      totals?: [number, Totals];
      lastRx?: [number, number];
    };
    if (record.op !== undefined) content.ops.push(record.op);
    else if (record.totals) content.totals.push(record.totals);
    else if (record.lastRx) content.lastRx.push(record.lastRx);
  }
  return content;
}
