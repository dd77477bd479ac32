/**
 * The recorder on a real SQLite file: what is written comes back through the RunReader,
 * batches reach the file on their own, crashes are closed out, and failures are reported.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough } from 'node:stream';
import Database from 'better-sqlite3';
import { parse } from 'csv-parse/sync';
import type { TimedSample } from '@shared/engine/types';
import { openRecorder, openRunReader } from '../../main/recorder';
import type { Recorder, RunStart } from '../../main/recorder/types';

function tempDb(): { dir: string; path: string } {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-rec-'));
  return { dir, path: join(dir, 'runs.sqlite') };
}

// Invented demo scenario: a trail camera's 2S Li-ion pack on the bench.
const START: RunStart = {
  stationId: 'bench-1',
  stationLabel: 'trail camera pack',
  profileName: 'trail camera 2S',
  chemistry: 'li-ion',
  profileJson: { name: 'trail camera 2S', chemistry: 'li-ion', cells: 2 },
  startRxS: 1_800_000_000,
};

/** Invented samples: a slow ramp with a little ripple, 1 Hz. */
function sampleAt(i: number): TimedSample {
  return {
    t: i,
    rxS: START.startRxS + i,
    vbatV: 7.2 + i * 1e-4 + (i % 7) * 1e-3,
    ibatA: 1 - (i % 5) * 0.01,
    tempC: 25 + (i % 11) * 0.1,
    extra: i % 3 === 0 ? { fan: i % 2 } : {},
  };
}

function fill(rec: Recorder, runId: number, n: number): void {
  for (let i = 0; i < n; i++) {
    const s = sampleAt(i);
    rec.addLine(runId, { rxS: s.rxS, text: `t=${i} vbat=${s.vbatV} ibat=${s.ibatA}`, kind: 'sample' });
    rec.addSample(runId, s);
  }
}

test('samples, events, raw lines and totals come back as written', () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path);
    const { runId, resumed } = rec.startRun(START);
    assert.equal(resumed, false);
    fill(rec, runId, 100);
    rec.addLine(runId, {
      rxS: START.startRxS + 100,
      text: 'x'.repeat(4096),
      kind: 'rejected',
      reason: 'line-too-long',
      detail: 'cut',
      tooLong: true,
    });
    rec.addLine(runId, { rxS: START.startRxS + 100.5, text: '#fw 1.2', kind: 'firmware' });
    rec.addSent(runId, { text: 'rate 2', rxS: START.startRxS + 101, t: 101 });
    rec.addEvent(runId, { type: 'phase', t: 0, phase: 'cc' });
    // An unplug: the open gap and its end are one row.
    rec.addEvent(runId, { type: 'gap', t: 50, endT: null, reason: 'port lost' });
    rec.addEvent(runId, {
      type: 'gap',
      t: 50,
      endT: 62,
      reason: 'port lost; lines lost during the gap: unknown',
    });
    rec.endRun(runId, START.startRxS + 120, 'stopped', {
      durationS: 99,
      ah: 0.0275,
      wh: 0.2,
      lines: 102,
      rejected: 1,
    });
    const run = rec.getRun(runId);
    assert.ok(run);
    assert.equal(run.endReason, 'stopped');
    assert.equal(run.lines, 102);
    assert.equal(run.ah, 0.0275);
    assert.deepEqual(rec.profileOf(runId), START.profileJson);
    assert.equal(rec.resolveRunId('latest'), runId);
    assert.deepEqual(rec.events(runId), [
      { type: 'phase', t: 0, phase: 'cc' },
      { type: 'gap', t: 50, endT: 62, reason: 'port lost; lines lost during the gap: unknown' },
    ]);
    const window = rec.samples(runId, 10, 20);
    assert.equal(window.length, 10);
    assert.deepEqual(window[0], sampleAt(10));
    const lines = [...rec.lineIterator(runId)];
    // Every received line in order; the sent line is not one of them.
    assert.equal(lines.length, 102);
    assert.equal(lines[0].text, 't=0 vbat=7.2 ibat=1');
    assert.deepEqual(lines[100], { text: 'x'.repeat(4096), rxS: START.startRxS + 100, tooLong: true });
    const feed = rec.rawLines(runId, START.startRxS + 99.5);
    assert.deepEqual(
      feed.map((l) => l.kind),
      ['rejected', 'firmware', 'sent'],
    );
    assert.equal(feed[0].reason, 'line-too-long');
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('overview matches a brute-force min/max/mean, from samples and from the rollup', () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path);
    const { runId } = rec.startRun(START);
    const n = 7200;
    fill(rec, runId, n);
    rec.flush();
    const all = Array.from({ length: n }, (_, i) => sampleAt(i));
    const brute = (from: number, to: number, buckets: number) => {
      const w = (to - from) / buckets;
      return Array.from({ length: buckets }, (_, b) => {
        const inB = all
          .filter((s) => s.t >= from + b * w && s.t < from + (b + 1) * w)
          .map((s) => s.vbatV as number);
        return inB.length === 0
          ? null
          : {
              count: inB.length,
              min: Math.min(...inB),
              max: Math.max(...inB),
              mean: inB.reduce((a, x) => a + x, 0) / inB.length,
            };
      });
    };
    // 50 s buckets read the samples; 600 s buckets read the 60 s rollup (slots align with buckets).
    for (const [from, to, buckets] of [
      [1000, 1500, 10],
      [0, 6000, 10],
    ] as const) {
      const got = rec.overview(runId, ['vbatV'], from, to, buckets);
      const want = brute(from, to, buckets);
      assert.equal(got.length, buckets);
      got.forEach((b, i) => {
        const w = want[i];
        assert.ok(w);
        assert.equal(b.count, w.count);
        assert.equal(b.values.vbatV?.min, w.min);
        assert.equal(b.values.vbatV?.max, w.max);
        assert.ok(Math.abs((b.values.vbatV?.mean ?? NaN) - w.mean) < 1e-9);
      });
    }
    // A window past the end has empty buckets, not missing ones.
    const past = rec.overview(runId, ['vbatV', 'tempC'], n, n + 100, 4);
    assert.deepEqual(
      past.map((b) => b.count),
      [0, 0, 0, 0],
    );
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('CSV export carries units in the headers and every sample', async () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path);
    const { runId } = rec.startRun(START);
    fill(rec, runId, 2500);
    rec.flush();
    const out = new PassThrough();
    const chunks: Buffer[] = [];
    out.on('data', (c: Buffer) => chunks.push(c));
    await rec.exportCsv(runId, out);
    // Parsed with csv-parse, the reference reader of the same project as csv-stringify.
    const rows = parse(Buffer.concat(chunks).toString('utf8'), { columns: true }) as Array<
      Record<string, string>
    >;
    assert.equal(rows.length, 2500);
    assert.ok(
      'vbat (V)' in rows[0] &&
        'ibat (A)' in rows[0] &&
        'temp (°C)' in rows[0] &&
        't (s since start)' in rows[0] &&
        'time (ISO 8601)' in rows[0],
    );
    assert.equal(Number(rows[1234]['vbat (V)']), sampleAt(1234).vbatV);
    assert.equal(rows[3].fan, '1');
    assert.equal(rows[4].fan, '');
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('batches reach the file on the flush timer, without an explicit flush', async () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path, { flushIntervalMs: 250 });
    const { runId } = rec.startRun(START);
    fill(rec, runId, 10);
    const other = new Database(path, { readonly: true });
    const count = () => (other.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n;
    // Polled (never a timing assertion): the rows must arrive by themselves.
    for (let i = 0; i < 100 && count() < 10; i++) await new Promise((r) => setTimeout(r, 50));
    assert.equal(count(), 10);
    other.close();
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a large batch is committed at once, before the timer', () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path, { batchRows: 100, flushIntervalMs: 60_000 });
    const { runId } = rec.startRun(START);
    for (let i = 0; i < 250; i++)
      rec.addLine(runId, { rxS: START.startRxS + i, text: `l${i}`, kind: 'sample' });
    const other = new Database(path, { readonly: true });
    const n = (other.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n;
    other.close();
    // Two full batches of 100 were written when they filled; the last 50 wait for the timer or a flush.
    assert.equal(n, 200);
    assert.equal(rec.health().pending, 50);
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a run left open by a crash is closed as interrupted, or continued within the resume window', () => {
  const { dir, path } = tempDb();
  try {
    const a = openRecorder(path);
    const { runId } = a.startRun(START);
    fill(a, runId, 30);
    a.flush();
    // Abandoned without endRun or close: what a kill -9 leaves behind.
    const b = openRecorder(path);
    const run = b.getRun(runId);
    assert.equal(run?.endReason, 'interrupted');
    assert.equal(run?.endRxS, START.startRxS + 29);
    assert.equal(run?.lines, 30);
    // A different profile never continues the old run.
    const other = b.startRun(
      { ...START, profileJson: { chemistry: 'lifepo4', cells: 2 }, startRxS: START.startRxS + 40 },
      { resumeWithinS: 600 },
    );
    assert.equal(other.resumed, false);
    b.endRun(other.runId, START.startRxS + 41, 'stopped');
    b.close();
    a.close();

    const { dir: dir2, path: path2 } = tempDb();
    try {
      const c = openRecorder(path2);
      const first = c.startRun(START);
      fill(c, first.runId, 30);
      c.flush();
      const d = openRecorder(path2);
      const again = d.startRun({ ...START, startRxS: START.startRxS + 60 }, { resumeWithinS: 600 });
      assert.deepEqual(again, { runId: first.runId, resumed: true, lastRxS: START.startRxS + 29 });
      d.addSample(again.runId, { ...sampleAt(31), vbatV: 9 });
      d.endRun(again.runId, START.startRxS + 62, 'stopped');
      assert.equal(d.getRun(first.runId)?.endReason, 'stopped');
      assert.equal(d.samples(first.runId, 0, 100).length, 31);
      assert.equal(d.overview(first.runId, ['vbatV'], 0, 100, 1)[0].values.vbatV?.max, 9);
      d.close();
      c.close();
      // Too late to continue: a new run.
      const e = openRecorder(path2);
      const late = e.startRun({ ...START, startRxS: START.startRxS + 10_000 }, { resumeWithinS: 600 });
      assert.equal(late.resumed, false);
      e.close();
    } finally {
      rmSync(dir2, { recursive: true, force: true });
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a locked database is reported once as critical, rows are kept and written after the lock goes', async () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path, { retryMs: 50, busyTimeoutMs: 20, flushIntervalMs: 25 });
    const problems: string[] = [];
    const recovered: string[] = [];
    rec.on('problem', (p) => problems.push(`${p.level}: ${p.message}`));
    rec.on('recovered', (p) => recovered.push(p.message));
    const { runId } = rec.startRun(START);
    fill(rec, runId, 10);
    rec.flush();
    const locker = new Database(path);
    locker.exec('BEGIN EXCLUSIVE');
    fill(rec, runId, 20);
    rec.flush();
    assert.equal(problems.length, 1);
    assert.match(
      problems[0],
      /^critical: recording stopped: .* is locked by another program\. The live display continues/,
    );
    assert.equal(rec.health().ok, false);
    assert.ok(rec.health().pending >= 40);
    // A run started while the file is locked gets its id at once; its row waits with the rest.
    const second = rec.startRun({ ...START, stationId: 'bench-2', startRxS: START.startRxS + 50 });
    assert.equal(second.runId, runId + 1);
    fill(rec, second.runId, 5);
    await new Promise((r) => setTimeout(r, 200));
    assert.equal(problems.length, 1, 'the same problem is said once');
    locker.exec('COMMIT');
    locker.close();
    for (let i = 0; i < 200 && recovered.length === 0; i++) await new Promise((r) => setTimeout(r, 25));
    assert.equal(recovered.length, 1);
    assert.match(recovered[0], /nothing was lost/);
    assert.equal(rec.health().ok, true);
    assert.equal([...rec.lineIterator(runId)].length, 30);
    assert.equal(rec.getRun(second.runId)?.stationId, 'bench-2');
    assert.equal([...rec.lineIterator(second.runId)].length, 5);
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a backlog past its cap drops the oldest rows and counts them', () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path, { maxBacklogRows: 100, busyTimeoutMs: 10, retryMs: 60_000 });
    rec.on('problem', () => undefined);
    const { runId } = rec.startRun(START);
    rec.flush();
    const locker = new Database(path);
    locker.exec('BEGIN EXCLUSIVE');
    rec.addLine(runId, { rxS: START.startRxS, text: 'first', kind: 'sample' });
    rec.flush();
    for (let i = 0; i < 150; i++)
      rec.addLine(runId, { rxS: START.startRxS + i + 1, text: `l${i}`, kind: 'sample' });
    const { dropped, pending } = rec.health();
    assert.ok(pending <= 100, `pending ${pending}`);
    assert.equal(dropped + pending, 151, 'every row is either kept or counted as dropped');
    locker.exec('COMMIT');
    locker.close();
    rec.flush();
    const lines = [...rec.lineIterator(runId)].map((l) => l.text);
    // The newest rows are the ones kept, in order.
    assert.deepEqual(
      lines,
      Array.from({ length: pending }, (_, k) => `l${150 - pending + k}`),
    );
    assert.equal(rec.health().dropped, dropped);
    rec.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a read-only reader sees the runs and deletes nothing it is not asked to', () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path);
    const a = rec.startRun(START);
    fill(rec, a.runId, 5);
    rec.endRun(a.runId, START.startRxS + 5, 'completed');
    const b = rec.startRun({ ...START, startRxS: START.startRxS + 100 });
    rec.endRun(b.runId, START.startRxS + 101, 'stopped');
    rec.close();
    const reader = openRunReader(path);
    assert.deepEqual(
      reader.listRuns().map((r) => [r.id, r.endReason]),
      [
        [b.runId, 'stopped'],
        [a.runId, 'completed'],
      ],
    );
    reader.deleteRun(a.runId);
    assert.equal(reader.getRun(a.runId), null);
    assert.equal(reader.samples(a.runId, 0, 100).length, 0);
    assert.equal(reader.resolveRunId(a.runId), null);
    reader.close();
    const db = new Database(path, { readonly: true });
    // PRAGMA integrity_check returns the single row "ok" for a sound file (sqlite.org/pragma.html#pragma_integrity_check).
    assert.equal(db.pragma('integrity_check', { simple: true }), 'ok');
    db.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test("a run's internal resistance is kept in its summary and comes back on its row", () => {
  const { dir, path } = tempDb();
  try {
    const rec = openRecorder(path);
    const a = rec.startRun(START);
    fill(rec, a.runId, 10);
    // Invented figures: the engine's estimate 0.062 Ω (whole 2S pack).
    rec.endRun(a.runId, START.startRxS + 11, 'completed', {
      durationS: 9,
      ah: 0.0025,
      wh: 0.018,
      lines: 10,
      rejected: 0,
      phaseS: { cc: 9 },
      internalResistanceOhm: 0.062,
    });
    const b = rec.startRun({ ...START, startRxS: START.startRxS + 100 });
    rec.endRun(b.runId, START.startRxS + 101, 'stopped', {
      durationS: 1,
      ah: 0,
      wh: 0,
      lines: 0,
      rejected: 0,
      internalResistanceOhm: null,
    });
    rec.close();
    // A summary written before the estimate was kept held only time per phase.
    const db = new Database(path);
    const c = db
      .prepare(
        "INSERT INTO runs (station_id, station_label, profile_name, chemistry, profile_json, start_rx_s, duration_s, ah, wh, lines, rejected, summary_json) VALUES ('bench-1', '', 'old', 'li-ion', '{}', 1, 0, 0, 0, 0, 0, '{\"cc\":5}')",
      )
      .run().lastInsertRowid;
    db.close();
    const reader = openRunReader(path);
    assert.equal(reader.getRun(a.runId)?.internalResistanceOhm, 0.062);
    assert.equal(reader.getRun(b.runId)?.internalResistanceOhm, null);
    assert.equal(reader.getRun(Number(c))?.internalResistanceOhm, null);
    reader.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
