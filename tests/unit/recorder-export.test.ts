/**
 * Reading whole runs back from a real SQLite file: the CSV export into outputs that fail,
 * and `allSamples` for runs past the 100,000-sample window of `samples`.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { createWriteStream, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough, Writable } from 'node:stream';
import { parse } from 'csv-parse/sync';
import type { TimedSample } from '@shared/engine/types';
import { createAppService } from '../../main/app/service';
import { realLibraries } from '../../main/app/libraries';
import { openRecorder } from '../../main/recorder';
import type { Recorder, RunStart } from '../../main/recorder/types';
import { recordedRunReportInput } from '../../main/report';
import { createStationManager } from '../../main/station';

// Invented demo scenario: a weather station's 2S Li-ion pack on the bench.
const START: RunStart = {
  stationId: 'bench-2',
  stationLabel: 'weather station pack',
  profileName: 'weather station 2S',
  chemistry: 'li-ion',
  profileJson: { name: 'weather station 2S', chemistry: 'li-ion', cells: 2 },
  startRxS: 1_800_000_000,
};

/** Invented samples, three per second of run time so equal `t` values straddle page edges. */
function sampleAt(i: number): TimedSample {
  const t = Math.floor(i / 3);
  return { t, rxS: START.startRxS + t, vbatV: 7.4 + (i % 97) * 1e-4, ibatA: 0.5, tempC: 24, extra: {} };
}

function withRun(n: number): { dir: string; rec: Recorder; runId: number } {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-export-'));
  const rec = openRecorder(join(dir, 'runs.sqlite'));
  const { runId } = rec.startRun(START);
  for (let i = 0; i < n; i++) rec.addSample(runId, sampleAt(i));
  rec.endRun(runId, START.startRxS + n / 3, 'stopped');
  return { dir, rec, runId };
}

/** Collects unhandled rejections while `body` runs, and for a moment after it settles. */
async function unhandledDuring(body: () => Promise<void>): Promise<unknown[]> {
  const seen: unknown[] = [];
  const onUnhandled = (reason: unknown) => seen.push(reason);
  process.on('unhandledRejection', onUnhandled);
  try {
    await body();
    await new Promise((r) => setTimeout(r, 50));
  } finally {
    process.off('unhandledRejection', onUnhandled);
  }
  return seen;
}

test(
  'an export into an output that fails mid-way rejects with its error, no unhandled rejection',
  { timeout: 20_000 },
  async () => {
    const { dir, rec, runId } = withRun(30_000);
    try {
      let writes = 0;
      // A slow, small-buffered output (so the export waits on backpressure) that then fails
      // like a full disk.
      const failing = new Writable({
        highWaterMark: 256,
        write(_chunk, _enc, callback) {
          writes++;
          setTimeout(() => callback(writes >= 5 ? new Error('ENOSPC: no space left on device') : null), 2);
        },
      });
      const unhandled = await unhandledDuring(async () => {
        await assert.rejects(rec.exportCsv(runId, failing), /ENOSPC/);
      });
      assert.deepEqual(unhandled, []);
      assert.ok(failing.destroyed, 'the failed output is destroyed, not left open');

      // The reader is unharmed: the next export of the same run is whole.
      const out = new PassThrough();
      const chunks: Buffer[] = [];
      out.on('data', (c: Buffer) => chunks.push(c));
      await rec.exportCsv(runId, out);
      assert.ok(out.writableEnded, 'the export ends its output');
      const rows = parse(Buffer.concat(chunks).toString('utf8'), { columns: true }) as unknown[];
      assert.equal(rows.length, 30_000);
    } finally {
      rec.close();
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

test(
  'an export whose output is closed early (a reader that went away) rejects instead of hanging',
  { timeout: 20_000 },
  async () => {
    const { dir, rec, runId } = withRun(30_000);
    try {
      // Never reads: the export fills its buffer, waits, and then the output goes away.
      const stalled = new Writable({ highWaterMark: 1024, write() {} });
      const unhandled = await unhandledDuring(async () => {
        const exporting = rec.exportCsv(runId, stalled);
        setTimeout(() => stalled.destroy(), 20);
        await assert.rejects(exporting, { code: 'ERR_STREAM_PREMATURE_CLOSE' });
      });
      assert.deepEqual(unhandled, []);
    } finally {
      rec.close();
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

test(
  'an export to a file in a folder that does not exist rejects with the open error',
  { timeout: 20_000 },
  async () => {
    const { dir, rec, runId } = withRun(100);
    try {
      const unhandled = await unhandledDuring(async () => {
        await assert.rejects(
          rec.exportCsv(runId, createWriteStream(join(dir, 'no-such-folder', 'run.csv'))),
          { code: 'ENOENT' },
        );
      });
      assert.deepEqual(unhandled, []);
    } finally {
      rec.close();
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

test('allSamples returns every sample of a run longer than 100,000 samples, in order', async () => {
  const n = 120_000;
  const { dir, rec, runId } = withRun(n);
  try {
    // `samples` is a window with a default cap; this run is past it.
    assert.equal(rec.samples(runId, 0, Number.MAX_VALUE).length, 100_000);
    const all = rec.allSamples(runId);
    assert.equal(all.length, n);
    for (let i = 0; i < n; i++) {
      if (all[i].t !== sampleAt(i).t || all[i].vbatV !== sampleAt(i).vbatV)
        assert.fail(`sample ${i} differs: ${JSON.stringify(all[i])} vs ${JSON.stringify(sampleAt(i))}`);
    }

    // The Run report reads the whole run.
    assert.equal(recordedRunReportInput(rec, runId).samples.length, n);

    // So does runs.diagnose of the app service (real manager, real diagnosis; the wrapper only
    // counts what reaches it).
    const stations = createStationManager({ recorder: rec });
    let diagnosedSamples = -1;
    const service = createAppService({
      stations,
      recorder: rec,
      libraries: {
        ...realLibraries,
        diagnose: (input) => {
          diagnosedSamples = input.samples.length;
          return realLibraries.diagnose(input);
        },
      },
    });
    try {
      await service.handle('runs.diagnose', { runId });
      assert.equal(diagnosedSamples, n);
    } finally {
      service.close();
      await stations.close();
    }
  } finally {
    rec.close();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('CSV export: text cells a spreadsheet would run as formulas get a leading quote, numbers stay numbers', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-export-'));
  const rec = openRecorder(join(dir, 'runs.sqlite'));
  try {
    const { runId } = rec.startRun(START);
    // The starting characters OWASP's CSV Injection page lists: = + - @ tab, carriage return.
    const hostile = {
      link: '=HYPERLINK("http://evil.example","click")',
      sum: '@SUM(1+1)*cmd',
      plus: '+1+1',
      minus: '-1+cmd',
      tab: '\t=1',
      cr: '\r=1',
      plain: 'garden',
      level: -3.5,
      '=key': 'x',
    };
    rec.addSample(runId, { t: 0, rxS: START.startRxS, vbatV: -0.25, ibatA: 0.5, extra: hostile });
    rec.endRun(runId, START.startRxS + 1, 'stopped');
    const out = new PassThrough();
    let text = '';
    out.on('data', (d: Buffer) => (text += d.toString()));
    await rec.exportCsv(runId, out);
    const [header, row] = parse(text, { relax_column_count: true }) as string[][];
    const cell = (name: string) => row[header.indexOf(name)];
    assert.equal(cell('link'), `'=HYPERLINK("http://evil.example","click")`);
    assert.equal(cell('sum'), `'@SUM(1+1)*cmd`);
    assert.equal(cell('plus'), `'+1+1`);
    assert.equal(cell('minus'), `'-1+cmd`);
    assert.equal(cell('tab'), `'\t=1`);
    assert.equal(cell('cr'), `'\r=1`);
    assert.equal(cell('plain'), 'garden');
    // Numbers, negative ones included, are written as numbers.
    assert.equal(cell('level'), '-3.5');
    assert.ok(header.includes(`'=key`));
    assert.ok(row.includes('-0.25'));
  } finally {
    rec.close();
    rmSync(dir, { recursive: true, force: true });
  }
});
