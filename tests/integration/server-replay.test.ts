/**
 * The whole backend as `taperline serve` assembles it (recorder, stations, service, server)
 * with a station on a socat pty pair: diagnosis of the live run and of the recorded run,
 * the Run report download, and a replay of the recorded run that records no copy of itself.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { SampleBatch } from '@shared/ipc/pushes';
import { startBackend, type Backend } from '../../main/app/backend';
import { startServer, type RunningServer } from '../../main/server';
import { realLibraries } from '../../main/app/libraries';
import { ApiClient, openPtyPair, rawGet, TRAIL_CAMERA_PROFILE, type PtyPair } from './server-harness';

let dir: string;
let pty: PtyPair;
let backend: Backend;
let server: RunningServer;
let client: ApiClient;
let runId: number;

const LINES = 30;

before(async () => {
  dir = mkdtempSync(join(tmpdir(), 'taperline-replay-'));
  pty = await openPtyPair(dir);
  const profilePath = join(dir, 'trail-camera.json');
  writeFileSync(profilePath, JSON.stringify(TRAIL_CAMERA_PROFILE));
  backend = await startBackend({
    dbPath: join(dir, 'runs.sqlite'),
    serial: { path: pty.stationPath, baudRate: 115200, profilePath },
  });
  server = await startServer({
    port: 0,
    service: backend.service,
    recorder: backend.recorder,
    reportHtml: (id) => realLibraries.runReportHtml(backend.recorder!, id),
    reportPdf: (id) => realLibraries.runReportPdf(backend.recorder!, id),
  });
  client = await ApiClient.connect(`ws://127.0.0.1:${server.port}/api/ws`);
  await client.waitForPush(
    (p) => p.push === 'station' && (p.data as { source: { state: string } }).source.state === 'open',
  );
  // Invented demo data: a 2S pack in constant current, rising 10 mV a second.
  for (let i = 0; i < LINES; i++) {
    pty.write(
      `t=${i} vbat=${(7.3 + i * 0.01).toFixed(2)} ibat=0.50 temp=24.5 vin=12.1 iin=0.36 chg=1 flt=0\n`,
    );
  }
  const isLive = (p: { push: string; data: unknown }) =>
    p.push === 'samples' && (p.data as SampleBatch).stationId === 'bench-1';
  const deadline = Date.now() + 10_000;
  while (Date.now() < deadline) {
    const n = client.pushes.filter(isLive).reduce((sum, p) => sum + (p.data as SampleBatch).tS.length, 0);
    if (n >= LINES) break;
    await new Promise((r) => setTimeout(r, 50));
  }
  backend.recorder!.flush();
  runId = backend.stations.get('bench-1')!.runId!;
});

after(async () => {
  await client?.close();
  await server?.close();
  await backend?.stop();
  await pty?.close();
  rmSync(dir, { recursive: true, force: true });
});

test('the live station and its recorded run can both be diagnosed', async () => {
  const live = await client.request('stations.diagnose', { stationId: 'bench-1' });
  assert.equal(live.ok, true, JSON.stringify(live));
  const diagnosis = (live as { result: { t: number; causes: { code: string; confidence: number }[] } })
    .result;
  assert.equal(typeof diagnosis.t, 'number');
  assert.ok(Array.isArray(diagnosis.causes));
  // PROTOCOL section 3: causes sorted by confidence, highest first.
  for (let i = 1; i < diagnosis.causes.length; i++)
    assert.ok(diagnosis.causes[i - 1].confidence >= diagnosis.causes[i].confidence);
  const recorded = await client.request('runs.diagnose', { runId });
  assert.equal(recorded.ok, true, JSON.stringify(recorded));
});

test('the Run report is offered as a download URL and served as HTML', async () => {
  const reply = await client.request('runs.report', { runId });
  assert.deepEqual((reply as { result: unknown }).result, { url: `/api/runs/${runId}/report.html` });
  const page = await rawGet(server.port, `/api/runs/${runId}/report.html`);
  assert.equal(page.status, 200);
  assert.match(String(page.headers['content-type']), /text\/html/);
  assert.match(page.body, /<html/i);
  assert.match(page.body, /trail camera 2S Li-ion/);
  // The report's inline charts may run, sandboxed: no network, no access to this server's origin.
  const csp = String(page.headers['content-security-policy']);
  assert.match(csp, /default-src 'none'/);
  assert.match(csp, /sandbox allow-scripts/);
});

test('the Run report PDF is printed by headless Chromium and served', { timeout: 60_000 }, async () => {
  const reply = await client.request('runs.report', { runId, pdf: true });
  assert.deepEqual((reply as { result: unknown }).result, { url: `/api/runs/${runId}/report.pdf` });
  const pdf = await rawGet(server.port, `/api/runs/${runId}/report.pdf`);
  assert.equal(pdf.status, 200, pdf.body.slice(0, 200));
  assert.equal(pdf.headers['content-type'], 'application/pdf');
  // ISO 32000-1 section 7.5.2: a PDF file starts with the header %PDF-1.n.
  assert.match(pdf.body.slice(0, 8), /^%PDF-1\.\d/);
});

test('a recorded run replays as a station, without recording a copy', async () => {
  const reply = await client.request('runs.replay', { runId, speed: 'max' });
  assert.equal(reply.ok, true, JSON.stringify(reply));
  const station = (reply as { result: { id: string; label: string } }).result;
  assert.match(station.id, new RegExp(`^replay-${runId}-`));
  const isReplay = (p: { push: string; data: unknown }) =>
    p.push === 'samples' && (p.data as SampleBatch).stationId === station.id;
  const deadline = Date.now() + 10_000;
  let replayed: SampleBatch[] = [];
  while (Date.now() < deadline) {
    replayed = client.pushes.filter(isReplay).map((p) => p.data as SampleBatch);
    if (replayed.reduce((n, b) => n + b.tS.length, 0) >= LINES) break;
    await new Promise((r) => setTimeout(r, 50));
  }
  const tS = replayed.flatMap((b) => b.tS);
  const vbatV = replayed.flatMap((b) => b.vbatV);
  assert.equal(tS.length, LINES);
  // Same values as the live run: the replay reads the recorded lines through the same pipeline.
  assert.deepEqual(
    tS,
    Array.from({ length: LINES }, (_, i) => i),
  );
  assert.equal(vbatV[LINES - 1], 7.59);
  const runs = (await client.request('runs.list')) as { result: unknown[] };
  assert.equal(runs.result.length, 1);
  await client.waitForPush(
    (p) =>
      p.push === 'station' &&
      (p.data as { id: string; source: { state: string; detail: string } }).id === station.id &&
      (p.data as { source: { state: string } }).source.state === 'closed',
  );
  const removed = await client.request('stations.remove', { stationId: station.id });
  assert.equal(removed.ok, true);
  const missing = await client.request('runs.replay', { runId: 9999, speed: 10 });
  assert.match(!missing.ok ? missing.error : '', /no recorded run 9999/);
});
