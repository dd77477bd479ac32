/**
 * The relay between the Electron main process and its backend child, with a real child:
 * plain Node running the CLI's `serve --electron-child` with a simulated station and a real
 * SQLite file. Only the dialogs, which need Electron, are plain functions here.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
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

test(
  'a request sent while the backend fails to start is answered, not left waiting',
  { timeout: 30_000 },
  async () => {
    const exits: string[] = [];
    const backend = startBackendProcess({
      cliPath: join(root, 'main/cli/main.ts'),
      nodePath: '/nonexistent/node',
      serveArgs: [],
      onPush: () => undefined,
      choosePath: async () => null,
      printPdf: async () => undefined,
      onExit: (reason) => exits.push(reason),
    });
    // Sent before the spawn error is known: Node emits 'error' for a missing executable and never 'exit'.
    const early = await backend.request({ id: 5, method: 'stations.list', params: {} });
    assert.equal(early.id, 5);
    assert.match(!early.ok ? early.error : '', /could not start.*TAPERLINE_NODE/);
    const late = await backend.request({ id: 6, method: 'stations.list', params: {} });
    assert.match(!late.ok ? late.error : '', /TAPERLINE_NODE/);
    await assert.rejects(backend.ready, /TAPERLINE_NODE/);
    await backend.stop();
    assert.equal(exits.length, 1, 'the end is reported once');
  },
);

/** A stand-in backend (plain Node, no Taperline code) that misbehaves on its first request. */
function misbehavingChild(dir: string): string {
  const path = join(dir, 'child.cjs');
  writeFileSync(
    path,
    [
      'const how = process.argv[process.argv.length - 1];',
      'const keepAlive = setInterval(() => undefined, 1000);',
      "process.on('message', (m) => {",
      "  if (m.type !== 'request') return;",
      "  if (how === 'exit') process.exit(3);",
      '  process.disconnect();',
      '});',
      "process.on('disconnect', () => setTimeout(() => clearInterval(keepAlive), 20_000).unref());",
      '',
    ].join('\n'),
  );
  return path;
}

for (const how of ['exit', 'disconnect'] as const) {
  test(
    `a backend that ${how === 'exit' ? 'exits' : 'closes its channel'} while asked answers the request`,
    { timeout: 30_000 },
    async () => {
      const dir = mkdtempSync(join(tmpdir(), 'taperline-child-'));
      const exits: string[] = [];
      const backend = startBackendProcess({
        cliPath: misbehavingChild(dir),
        nodePath: process.execPath,
        serveArgs: [how],
        onPush: () => undefined,
        choosePath: async () => null,
        printPdf: async () => undefined,
        onExit: (reason) => exits.push(reason),
      });
      try {
        const reply = await backend.request({ id: 9, method: 'stations.list', params: {} });
        assert.equal(reply.id, 9);
        assert.equal(reply.ok, false);
        if (how === 'exit')
          assert.match(!reply.ok ? reply.error : '', /the backend stopped|closed its channel/);
        else assert.match(!reply.ok ? reply.error : '', /closed its channel/);
        // With the channel gone, a new request is answered at once instead of being queued.
        const after = await backend.request({ id: 10, method: 'stations.list', params: {} });
        assert.deepEqual(after, { id: 10, ok: false, error: 'the backend is not running' });
      } finally {
        // The lingering child ignores 'stop' (no channel): stop() kills it after the grace time.
        await backend.stop(200);
        rmSync(dir, { recursive: true, force: true });
      }
      assert.equal(exits.length, 1);
      if (how === 'exit') assert.match(exits[0], /exit code 3/);
      else assert.match(exits[0], /SIGKILL/);
    },
  );
}
