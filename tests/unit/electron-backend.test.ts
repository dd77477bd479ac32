/**
 * The relay between the Electron main process and its backend child, with a real child:
 * plain Node running the CLI's `serve --electron-child` with a simulated station and a real
 * SQLite file. Only the dialogs, which need Electron, are plain functions here.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { PushEnvelope } from '@shared/ipc/pushes';
import { nodeExecutable, startBackendProcess } from '../../main/electron/backend-process';
import { openRunReader } from '../../main/recorder';

const root = join(__dirname, '..', '..');

test('the node that runs the backend comes from TAPERLINE_NODE, else PATH', () => {
  assert.equal(nodeExecutable({ TAPERLINE_NODE: '/opt/node20/bin/node' }), '/opt/node20/bin/node');
  assert.equal(nodeExecutable({}), 'node');
});

test('requests, pushes and saving go through the backend child', { timeout: 60_000 }, async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-child-'));
  const dbPath = join(dir, 'desk.sqlite');
  const pushes: PushEnvelope[] = [];
  const asked: string[] = [];
  let exitReason = '';
  const backend = startBackendProcess({
    cliPath: join(root, 'main/cli/main.ts'),
    execArgv: ['--import', 'tsx'],
    nodePath: process.execPath,
    serveArgs: ['--simulate', 'bench-liion-3s', '--speedup', '600', '--db', dbPath],
    onPush: (p) => pushes.push(p),
    choosePath: async (suggestedName) => {
      asked.push(suggestedName);
      return suggestedName.endsWith('.csv')
        ? join(dir, 'export.csv')
        : suggestedName.endsWith('.html')
          ? join(dir, 'report.html')
          : null;
    },
    printPdf: () => Promise.reject(new Error('no printer in this test')),
    onExit: (reason) => (exitReason = reason),
  });
  try {
    const ready = await backend.ready;
    assert.equal(ready.dbPath, dbPath);
    assert.equal(ready.stations, 1);

    const list = await backend.request({ id: 77, method: 'stations.list', params: {} });
    assert.equal(list.id, 77);
    const station = (list as { result: { id: string; runId: number }[] }).result[0];
    assert.ok(station.runId > 0);

    const bad = await backend.request({
      id: 78,
      method: 'stations.send',
      params: { stationId: station.id, ending: 'x' },
    });
    assert.match(!bad.ok ? bad.error : '', /stations\.send: (text|ending)/);

    const deadline = Date.now() + 15_000;
    while (!pushes.some((p) => p.push === 'samples') && Date.now() < deadline)
      await new Promise((r) => setTimeout(r, 50));
    assert.ok(
      pushes.some((p) => p.push === 'samples'),
      'samples pushed from the child',
    );

    const csv = await backend.request({ id: 79, method: 'runs.exportCsv', params: { runId: station.runId } });
    assert.deepEqual(csv, { id: 79, ok: true, result: { savedTo: join(dir, 'export.csv') } });
    const csvText = readFileSync(join(dir, 'export.csv'), 'utf8');
    assert.ok(csvText.split('\n').length >= 2, 'a header and at least one sample row');

    const report = await backend.request({ id: 80, method: 'runs.report', params: { runId: station.runId } });
    assert.deepEqual(report, { id: 80, ok: true, result: { savedTo: join(dir, 'report.html') } });
    assert.match(readFileSync(join(dir, 'report.html'), 'utf8'), /<html/i);

    const pdf = await backend.request({
      id: 81,
      method: 'runs.report',
      params: { runId: station.runId, pdf: true },
    });
    assert.deepEqual(pdf, { id: 81, ok: true, result: { cancelled: true } });
    assert.equal(asked.length, 3);
    assert.match(asked[0], /^taperline-run-\d+-.+\.csv$/);
  } finally {
    await backend.stop();
    rmSync(dir, { recursive: true, force: true, maxRetries: 3 });
  }
  assert.match(exitReason, /exit code 0/);
  assert.equal((await backend.request({ id: 82, method: 'stations.list', params: {} })).ok, false);
});

test('the run the child recorded is closed as stopped when the app quits', { timeout: 60_000 }, async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-child-'));
  const dbPath = join(dir, 'desk.sqlite');
  const backend = startBackendProcess({
    cliPath: join(root, 'main/cli/main.ts'),
    execArgv: ['--import', 'tsx'],
    nodePath: process.execPath,
    serveArgs: ['--simulate', 'bench-liion-3s', '--db', dbPath],
    onPush: () => undefined,
    choosePath: async () => null,
    printPdf: async () => undefined,
    onExit: () => undefined,
  });
  try {
    await backend.ready;
    await backend.stop();
    const reader = openRunReader(dbPath);
    try {
      assert.deepEqual(
        reader.listRuns().map((r) => r.endReason),
        ['stopped'],
      );
    } finally {
      reader.close();
    }
  } finally {
    await backend.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a backend that cannot start says why', { timeout: 60_000 }, async () => {
  const backend = startBackendProcess({
    cliPath: join(root, 'main/cli/main.ts'),
    execArgv: ['--import', 'tsx'],
    nodePath: process.execPath,
    serveArgs: ['--simulate', 'moon-base', '--no-record'],
    onPush: () => undefined,
    choosePath: async () => null,
    printPdf: async () => undefined,
    onExit: () => undefined,
  });
  await assert.rejects(backend.ready, /scenario "moon-base"/);
  const missingNode = startBackendProcess({
    cliPath: join(root, 'main/cli/main.ts'),
    nodePath: '/nonexistent/node',
    serveArgs: [],
    onPush: () => undefined,
    choosePath: async () => null,
    printPdf: async () => undefined,
    onExit: () => undefined,
  });
  await assert.rejects(missingNode.ready, /TAPERLINE_NODE/);
});
