/** Schema versions: an older file is upgraded at open, a newer one is refused untouched. */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import {
  defaultDbPath,
  migrate,
  openRecorder,
  openRunReader,
  RecorderOpenError,
  SCHEMA_VERSION,
} from '../../main/recorder';

test('a version 1 file (no rollup table) is upgraded at open and its rollup built from the samples', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-schema-'));
  try {
    const path = join(dir, 'old.sqlite');
    const old = new Database(path);
    migrate(old, 1);
    assert.equal(old.pragma('user_version', { simple: true }), 1);
    old
      .prepare(
        `INSERT INTO runs (id, station_id, station_label, profile_name, chemistry, profile_json, start_rx_s, end_rx_s, end_reason)
         VALUES (1, 'bench-2', 'weather station pack', 'ws', 'lifepo4', '{"chemistry":"lifepo4","cells":4}', 100, 400, 'completed')`,
      )
      .run();
    const ins = old.prepare('INSERT INTO samples (run_id, t, seq, rx_s, vbat_v) VALUES (1, ?, ?, ?, ?)');
    // Invented values: 300 samples at 1 Hz, vbat = 13 + t/1000.
    for (let i = 0; i < 300; i++) ins.run(i, i, 100 + i, 13 + i / 1000);
    old.close();

    const rec = openRecorder(path);
    const db = new Database(path, { readonly: true });
    assert.equal(db.pragma('user_version', { simple: true }), SCHEMA_VERSION);
    const slots = db
      .prepare('SELECT level_s, count(*) AS n FROM rollup WHERE run_id = 1 GROUP BY level_s ORDER BY level_s')
      .all();
    // 300 s of samples: 30 slots of 10 s, 5 of 60 s, 1 of 600 s.
    assert.deepEqual(slots, [
      { level_s: 10, n: 30 },
      { level_s: 60, n: 5 },
      { level_s: 600, n: 1 },
    ]);
    db.close();
    // 3 buckets of 100 s use the 10 s rollup; expected values from vbat = 13 + t/1000.
    const ov = rec.overview(1, ['vbatV'], 0, 300, 3);
    assert.deepEqual(
      ov.map((b) => [b.count, b.values.vbatV?.min, b.values.vbatV?.max]),
      [
        [100, 13, 13.099],
        [100, 13.1, 13.199],
        [100, 13.2, 13.299],
      ],
    );
    assert.equal(rec.getRun(1)?.endReason, 'completed');
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a file from a newer Taperline is refused with a message and left as it was', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-schema-'));
  try {
    const path = join(dir, 'new.sqlite');
    const db = new Database(path);
    db.pragma(`user_version = ${SCHEMA_VERSION + 5}`);
    db.close();
    assert.throws(
      () => openRecorder(path),
      (err: unknown) =>
        err instanceof RecorderOpenError &&
        /written by a newer Taperline/.test(err.message) &&
        /--db FILE/.test(err.message),
    );
    const again = new Database(path, { readonly: true });
    assert.equal(again.pragma('user_version', { simple: true }), SCHEMA_VERSION + 5);
    again.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('the default file follows each platform data folder convention', () => {
  // XDG Base Directory Specification: $XDG_DATA_HOME, default $HOME/.local/share; a relative value is ignored.
  assert.equal(
    defaultDbPath({ XDG_DATA_HOME: '/data/xdg' }, 'linux'),
    '/data/xdg/taperline/taperline.sqlite',
  );
  assert.match(
    defaultDbPath({ XDG_DATA_HOME: 'relative' }, 'linux'),
    /\/\.local\/share\/taperline\/taperline\.sqlite$/,
  );
  assert.match(defaultDbPath({}, 'darwin'), /\/Library\/Application Support\/taperline\/taperline\.sqlite$/);
  assert.match(
    defaultDbPath({ APPDATA: 'C:\\Users\\a\\AppData\\Roaming' }, 'win32'),
    /taperline[\\/]taperline\.sqlite$/,
  );
});

test('opening a database in a folder that cannot be created says so in words', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-schema-'));
  try {
    const blocker = join(dir, 'file');
    new Database(blocker).close();
    // The parent "folder" is a file: nothing can be created under it.
    assert.throws(
      () => openRecorder(join(blocker, 'sub', 'x.sqlite')),
      (err: unknown) =>
        err instanceof RecorderOpenError &&
        /nothing was recorded/.test(err.message) &&
        !/\n\s+at /.test(err.message),
    );
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a reader never creates a database where there is none', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-schema-'));
  try {
    const path = join(dir, 'absent.sqlite');
    assert.throws(
      () => openRunReader(path),
      (err: unknown) =>
        err instanceof RecorderOpenError && err.message === `no such recording database: ${path}`,
    );
    assert.equal(existsSync(path), false);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
