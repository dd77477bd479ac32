/**
 * The file side of the desktop shell on real temporary folders: the `taperline://app/`
 * protocol answers and the remembered window state.
 */
import { after, test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runFileStem } from '../../main/app/file-names';
import { createAppService } from '../../main/app/service';
import { answerAppRequest } from '../../main/electron/protocol';
import {
  DEFAULT_BOUNDS,
  loadWindowState,
  saveWindowState,
  windowStatePath,
} from '../../main/electron/window-state';
import { openRecorder } from '../../main/recorder';
import { createStationManager } from '../../main/station';

const dir = mkdtempSync(join(tmpdir(), 'taperline-electron-'));
const rendererDir = join(dir, 'renderer');
mkdirSync(join(rendererDir, 'views'), { recursive: true });
writeFileSync(join(rendererDir, 'index.html'), '<!doctype html><title>Taperline</title>\n');
writeFileSync(join(rendererDir, 'views', 'bench.js'), 'export {};\n');
writeFileSync(join(dir, 'secret.txt'), 'outside\n');
symlinkSync(join(dir, 'secret.txt'), join(rendererDir, 'link.txt'));
after(() => rmSync(dir, { recursive: true, force: true }));

test('the app protocol serves the bundle with the CSP header', () => {
  const page = answerAppRequest('taperline://app/', rendererDir);
  assert.equal(page.status, 200);
  assert.equal(page.headers['Content-Type'], 'text/html; charset=utf-8');
  const csp = page.headers['Content-Security-Policy'];
  assert.match(csp, /default-src 'self'/);
  assert.match(csp, /script-src 'self'/);
  assert.match(csp, /connect-src 'self'(;|$)/);
  assert.match(csp, /frame-ancestors 'none'/);
  assert.match(String(page.body), /<title>Taperline/);
  const script = answerAppRequest('taperline://app/views/bench.js?v=1', rendererDir);
  assert.equal(script.status, 200);
  assert.equal(script.headers['Content-Type'], 'text/javascript; charset=utf-8');
});

test('the app protocol refuses other hosts, traversal and links out of the bundle', () => {
  assert.equal(answerAppRequest('taperline://evil/index.html', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/../secret.txt', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/%2e%2e/secret.txt', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/views/..%2f..%2fsecret.txt', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/link.txt', rendererDir).status, 404);
  assert.equal(answerAppRequest('taperline://app/missing.js', rendererDir).status, 404);
});

test('the window state is remembered, and ignored when damaged or off every display', () => {
  const path = windowStatePath(join(dir, 'user-data'));
  const displays = [{ x: 0, y: 0, width: 1920, height: 1080 }];
  assert.deepEqual(loadWindowState(path, displays), DEFAULT_BOUNDS);
  saveWindowState(path, { x: 100, y: 80, width: 1400, height: 900, maximized: true });
  assert.deepEqual(loadWindowState(path, displays), {
    x: 100,
    y: 80,
    width: 1400,
    height: 900,
    maximized: true,
  });
  // The monitor it was on is gone: keep the size, let the system place it.
  assert.deepEqual(loadWindowState(path, [{ x: 3000, y: 0, width: 800, height: 600 }]), {
    width: 1400,
    height: 900,
    maximized: true,
  });
  writeFileSync(path, '{"width": "wide"');
  assert.deepEqual(loadWindowState(path, displays), DEFAULT_BOUNDS);
  saveWindowState(path, { width: 200, height: 100, maximized: false });
  assert.deepEqual(loadWindowState(path, displays), { width: 900, height: 600, maximized: false });
  assert.doesNotThrow(() => JSON.parse(readFileSync(path, 'utf8')));
});

test('the save dialog proposes a plain file name for a run recorded from a port path', async () => {
  const recorder = openRecorder(join(dir, 'names.sqlite'));
  const stations = createStationManager();
  const asked: string[] = [];
  const service = createAppService({
    stations,
    recorder,
    exportMode: {
      kind: 'save',
      choosePath: async (suggestedName) => {
        asked.push(suggestedName);
        return null;
      },
    },
    writeCsvFile: async () => undefined,
    writeReportFile: async () => undefined,
  });
  try {
    // `taperline record --port /dev/ttyUSB0` names its station after the port.
    const { runId } = recorder.startRun({
      stationId: 'serial:/dev/ttyUSB0',
      stationLabel: '/dev/ttyUSB0',
      profileName: 'weather station 1S LiFePO4 (invented demo)',
      chemistry: 'lifepo4',
      profileJson: { chemistry: 'lifepo4', cells: 1 },
      startRxS: 1_800_000_000,
    });
    assert.deepEqual(await service.handle('runs.exportCsv', { runId }), { cancelled: true });
    assert.deepEqual(await service.handle('runs.report', { runId, pdf: true }), { cancelled: true });
    assert.deepEqual(asked, [
      `taperline-run-${runId}-serial__dev_ttyUSB0.csv`,
      `taperline-run-${runId}-serial__dev_ttyUSB0.pdf`,
    ]);
  } finally {
    service.close();
    await stations.close();
    recorder.close();
  }
  // The same stem the HTTP download names its files with; nothing a path or a header could misread.
  assert.equal(runFileStem({ id: 3, stationId: 'bench-1' }), 'taperline-run-3-bench-1');
  assert.equal(runFileStem({ id: 4, stationId: 'C:\\ports\\"COM3"' }), 'taperline-run-4-C__ports__COM3_');
  assert.equal(runFileStem({ id: 5, stationId: '' }), 'taperline-run-5');
  assert.equal(
    runFileStem({ id: 6, stationId: `serial:${'/x'.repeat(100)}` }).length,
    'taperline-run-6-'.length + 64,
  );
});

test('a Batch report is saved where the person chooses, under a plain file name', async () => {
  const recorder = openRecorder(join(dir, 'batch.sqlite'));
  const stations = createStationManager();
  const written: [string, string, boolean][] = [];
  const service = createAppService({
    stations,
    recorder,
    exportMode: { kind: 'save', choosePath: async (name) => join(dir, 'chosen-' + name) },
    writeBatchFile: async (batchId, path, csv) => {
      written.push([batchId, path, csv]);
    },
  });
  try {
    // An invented lot: a 1S LiFePO4 garden-light board with its design values.
    const { runId } = recorder.startRun({
      stationId: 'rack-1',
      stationLabel: 'rack 1',
      profileName: 'garden light 1S LiFePO4 (invented demo)',
      chemistry: 'lifepo4',
      profileJson: { chemistry: 'lifepo4', cells: 1, expect: { chargeCurrentA: [0.45, 0.55] } },
      startRxS: 1_800_000_000,
    });
    recorder.setRunInfo(runId, { batchId: 'lot/7' });
    recorder.flush();
    assert.deepEqual(await service.handle('batches.report', { batchId: 'lot/7' }), {
      savedTo: join(dir, 'chosen-taperline-batch-lot_7.html'),
    });
    assert.deepEqual(await service.handle('batches.report', { batchId: 'lot/7', csv: true }), {
      savedTo: join(dir, 'chosen-taperline-batch-lot_7.csv'),
    });
    assert.deepEqual(written, [
      ['lot/7', join(dir, 'chosen-taperline-batch-lot_7.html'), false],
      ['lot/7', join(dir, 'chosen-taperline-batch-lot_7.csv'), true],
    ]);
    await assert.rejects(
      service.handle('batches.report', { batchId: 'lot/8' }),
      /no recorded run belongs to batch "lot\/8"/,
    );
  } finally {
    service.close();
    await stations.close();
    recorder.close();
  }
});
