/**
 * The CSV download of `taperline serve` over real HTTP on 127.0.0.1, from a real SQLite
 * recording: a whole download is every sample, and a browser that aborts mid-way does not
 * leave the export waiting for a drain that never comes.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { get, type IncomingMessage } from 'node:http';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse } from 'csv-parse/sync';
import { createAppService } from '../../main/app/service';
import { openRecorder } from '../../main/recorder';
import type { Recorder, RunReader } from '../../main/recorder/types';
import { startServer } from '../../main/server';
import { createStationManager } from '../../main/station';

const SAMPLES = 150_000;

/** Invented demo run: a boat's house battery (4S LiFePO4) logged once a second. */
function recordRun(rec: Recorder): number {
  const startRxS = 1_800_000_000;
  const { runId } = rec.startRun({
    stationId: 'serial:/dev/ttyUSB0',
    stationLabel: 'house battery',
    profileName: 'house battery 4S',
    chemistry: 'lifepo4',
    profileJson: { name: 'house battery 4S', chemistry: 'lifepo4', cells: 4 },
    startRxS,
  });
  for (let i = 0; i < SAMPLES; i++)
    rec.addSample(runId, {
      t: i,
      rxS: startRxS + i,
      vbatV: 13.2 + (i % 50) * 1e-3,
      ibatA: 10,
      tempC: 21.5,
      extra: {},
    });
  rec.endRun(runId, startRxS + SAMPLES, 'stopped');
  return runId;
}

/** The real reader, with each export's outcome noted as it settles. */
function observed(reader: RunReader, outcomes: Array<'resolved' | Error>): RunReader {
  const wrapper = Object.create(reader) as RunReader;
  wrapper.exportCsv = (runId, out) => {
    const exporting = reader.exportCsv(runId, out);
    exporting.then(
      () => outcomes.push('resolved'),
      (err: Error) => outcomes.push(err),
    );
    return exporting;
  };
  return wrapper;
}

function request(url: string): Promise<IncomingMessage> {
  return new Promise((resolve, reject) => get(url, resolve).on('error', reject));
}

async function until(what: string, ok: () => boolean, timeoutMs = 15_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!ok()) {
    if (Date.now() > deadline) assert.fail(`timed out waiting until ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

test(
  'an aborted CSV download settles the export; a whole one is every sample',
  { timeout: 60_000 },
  async () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-download-'));
    const recorder = openRecorder(join(dir, 'runs.sqlite'));
    const stations = createStationManager({ recorder });
    const service = createAppService({ stations, recorder });
    const outcomes: Array<'resolved' | Error> = [];
    const server = await startServer({
      port: 0,
      service,
      rendererDir: dir,
      recorder: observed(recorder, outcomes),
    });
    const unhandled: unknown[] = [];
    const onUnhandled = (reason: unknown) => unhandled.push(reason);
    process.on('unhandledRejection', onUnhandled);
    try {
      const runId = recordRun(recorder);
      // Every request needs the access token, loopback included.
      const url = `http://127.0.0.1:${server.port}/api/runs/${runId}/export.csv?token=${server.token}`;

      // A browser that takes the first bytes, stops reading (the server backs up on the full
      // socket) and then cancels the download.
      const aborted = await request(url);
      assert.equal(aborted.statusCode, 200);
      await new Promise<void>((resolve) => aborted.once('data', () => resolve()));
      aborted.pause();
      await new Promise((r) => setTimeout(r, 300));
      assert.equal(outcomes.length, 0, 'the export is still waiting on the stalled reader');
      aborted.destroy();
      await until('the aborted export settles', () => outcomes.length === 1);
      assert.ok(outcomes[0] instanceof Error, 'the aborted export rejects rather than resolving');

      // The server carries on: the next download is the whole run, with a safe file name.
      const whole = await request(url);
      assert.equal(whole.statusCode, 200);
      assert.match(
        String(whole.headers['content-disposition']),
        new RegExp(`filename="taperline-run-${runId}-serial__dev_ttyUSB0\\.csv"`),
      );
      const chunks: Buffer[] = [];
      for await (const chunk of whole) chunks.push(chunk as Buffer);
      // Parsed with csv-parse, the reference reader of the same project as csv-stringify.
      const rows = parse(Buffer.concat(chunks).toString('utf8'), { columns: true }) as Array<
        Record<string, string>
      >;
      assert.equal(rows.length, SAMPLES);
      assert.equal(Number(rows[SAMPLES - 1]['t (s since start)']), SAMPLES - 1);
      await until('the whole export settles', () => outcomes.length === 2);
      assert.equal(outcomes[1], 'resolved');
      await new Promise((r) => setTimeout(r, 50));
      assert.deepEqual(unhandled, []);
    } finally {
      process.off('unhandledRejection', onUnhandled);
      await server.close();
      service.close();
      await stations.close();
      recorder.close();
      rmSync(dir, { recursive: true, force: true });
    }
  },
);
