/**
 * The recording schema and its migrations. `PRAGMA user_version` holds the number of
 * migrations applied; opening a file applies the missing ones in one transaction each.
 */
import type Database from 'better-sqlite3';

/** Overview rollup levels, seconds of run time per row (see overview in reader.ts). */
export const ROLLUP_LEVELS_S = [10, 60, 600] as const;

/** Canonical series columns, in the order the rollup stores them. */
export const SERIES_COLUMNS = [
  ['vbatV', 'vbat_v'],
  ['ibatA', 'ibat_a'],
  ['tempC', 'temp_c'],
  ['vinV', 'vin_v'],
  ['iinA', 'iin_a'],
] as const;

function rollupBackfillSql(levelS: number): string {
  const cols = SERIES_COLUMNS.map(([, c]) => `min(${c}), max(${c}), total(${c}), count(${c})`).join(', ');
  return `INSERT OR REPLACE INTO rollup
    SELECT run_id, ${levelS}, CAST(floor(t / ${levelS}) AS INTEGER), count(*), min(t), max(t), ${cols}
    FROM samples GROUP BY run_id, CAST(floor(t / ${levelS}) AS INTEGER)`;
}

const rollupColumns = SERIES_COLUMNS.map(
  ([, c]) => `${c}_min REAL, ${c}_max REAL, ${c}_sum REAL, ${c}_n INTEGER`,
).join(',\n      ');

/** Each entry upgrades the file from version i to i + 1. Never edit a released entry: append. */
export const MIGRATIONS: ReadonlyArray<(db: Database.Database) => void> = [
  // 1: runs, samples, events, raw lines.
  (db) => {
    db.exec(`
    CREATE TABLE runs (
      id INTEGER PRIMARY KEY,
      station_id TEXT NOT NULL,
      station_label TEXT NOT NULL,
      profile_name TEXT NOT NULL,
      chemistry TEXT NOT NULL,
      profile_json TEXT NOT NULL,
      start_rx_s REAL NOT NULL,
      end_rx_s REAL,
      end_reason TEXT,
      last_rx_s REAL,
      duration_s REAL NOT NULL DEFAULT 0,
      ah REAL NOT NULL DEFAULT 0,
      wh REAL NOT NULL DEFAULT 0,
      lines INTEGER NOT NULL DEFAULT 0,
      rejected INTEGER NOT NULL DEFAULT 0,
      summary_json TEXT,
      -- Which process records the run while it is open, so another process opening the
      -- same file does not mistake a live run for one left open by a crash.
      writer_pid INTEGER,
      writer_host TEXT
    );
    CREATE INDEX runs_station ON runs(station_id, id);
    -- Clustered by (run, time): an overview or window read is one sequential range scan.
    CREATE TABLE samples (
      run_id INTEGER NOT NULL,
      t REAL NOT NULL,
      seq INTEGER NOT NULL,
      rx_s REAL NOT NULL,
      device_s REAL,
      vbat_v REAL,
      ibat_a REAL,
      temp_c REAL,
      ntc_raw REAL,
      vin_v REAL,
      iin_a REAL,
      chg INTEGER,
      flt INTEGER,
      src TEXT,
      extra_json TEXT,
      PRIMARY KEY (run_id, t, seq)
    ) WITHOUT ROWID;
    CREATE TABLE events (
      id INTEGER PRIMARY KEY,
      run_id INTEGER NOT NULL,
      t REAL NOT NULL,
      type TEXT NOT NULL,
      end_t REAL,
      json TEXT NOT NULL
    );
    CREATE INDEX events_run ON events(run_id, id);
    CREATE TABLE lines (
      id INTEGER PRIMARY KEY,
      run_id INTEGER NOT NULL,
      rx_s REAL NOT NULL,
      kind TEXT NOT NULL,
      text TEXT NOT NULL,
      reason TEXT,
      detail TEXT,
      too_long INTEGER NOT NULL DEFAULT 0
    );
    CREATE INDEX lines_run ON lines(run_id, id);
    `);
  },
  // 2: precomputed min/max/sum/count per run-time slot, for fast overviews of long runs.
  (db) => {
    db.exec(`
    CREATE TABLE rollup (
      run_id INTEGER NOT NULL,
      level_s INTEGER NOT NULL,
      idx INTEGER NOT NULL,
      n INTEGER NOT NULL,
      t_min REAL NOT NULL,
      t_max REAL NOT NULL,
      ${rollupColumns},
      PRIMARY KEY (run_id, level_s, idx)
    ) WITHOUT ROWID;`);
    for (const level of ROLLUP_LEVELS_S) db.exec(rollupBackfillSql(level));
  },
  // 3: board identity and verdict: which board a run tested (board id, operator, firmware
  // version), which burn-in batch it belongs to, and its checks' verdict JSON.
  (db) => {
    db.exec(`
    ALTER TABLE runs ADD COLUMN board_id TEXT;
    ALTER TABLE runs ADD COLUMN operator TEXT;
    ALTER TABLE runs ADD COLUMN firmware TEXT;
    ALTER TABLE runs ADD COLUMN batch_id TEXT;
    ALTER TABLE runs ADD COLUMN verdict_json TEXT;
    CREATE INDEX runs_batch ON runs(batch_id, id);
    CREATE INDEX runs_board ON runs(board_id, id);`);
  },
];

export const SCHEMA_VERSION = MIGRATIONS.length;

/** Apply the migrations a file is missing. Refuses a file from a newer Taperline. */
export function migrate(
  db: Database.Database,
  target: number = SCHEMA_VERSION,
): { from: number; to: number } {
  const from = db.pragma('user_version', { simple: true }) as number;
  if (from > SCHEMA_VERSION) {
    throw new Error(
      `the database was written by a newer Taperline (schema ${from}, this one knows ${SCHEMA_VERSION}); it was left untouched — update Taperline or use another --db FILE`,
    );
  }
  for (let v = from; v < target; v++) {
    const step = MIGRATIONS[v];
    db.transaction(() => {
      step(db);
      db.pragma(`user_version = ${v + 1}`);
    })();
  }
  return { from, to: Math.max(from, target) };
}
