/**
 * The whole backend as `taperline serve` assembles it (recorder, stations, service, server)
 * with a station on a socat pty pair: diagnosis of the live run and of the recorded run,
 * the Run report download, and a replay of the recorded run that records no copy of itself.
 * A second station records lines without device time (and one cut line), so its replay in the
 * app can be held against `taperline replay --db` of the same run.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { execFile } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import type { FeedLine } from '@shared/ipc/payloads';
import type { EngineEvent } from '@shared/engine/types';
import type { SampleBatch } from '@shared/ipc/pushes';
import { startBackend, type Backend } from '../../main/app/backend';
import { stationsFromOptions } from '../../main/app/station-options';
import { startServer, type RunningServer } from '../../main/server';
import { realLibraries } from '../../main/app/libraries';
import { ApiClient, openPtyPair, rawGet, TRAIL_CAMERA_PROFILE, type PtyPair } from './server-harness';

let dir: string;
let dbPath: string;
let pty: PtyPair;
let untimedPty: PtyPair;
let backend: Backend;
let server: RunningServer;
let client: ApiClient;
let runId: number;
let untimedRunId: number;

const LINES = 30;
/** Lines of the second station: no `t`, so its run time is the receive clock. */
const UNTIMED_LINES = 20;
const UNTIMED_SPACING_MS = 150;
/** The cut line is sent after this many untimed lines. */
const CUT_AFTER = 10;

const ROOT = join(__dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'taperline.cjs');
const run = promisify(execFile);

interface StationView {
  id: string;
  runId: number | null;
  lines: number;
  rejected: number;
  source: { state: string; detail: string };
  state: { t: number; metrics: { ah: number; wh: number } };
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function stationView(id: string): Promise<StationView> {
  const list = (await client.request('stations.list')) as { result: StationView[] };
  const view = list.result.find((s) => s.id === id);
  assert.ok(view, `station ${id} is listed`);
  return view;
}

before(async () => {
  dir = mkdtempSync(join(tmpdir(), 'taperline-replay-'));
  dbPath = join(dir, 'runs.sqlite');
  pty = await openPtyPair(dir);
  untimedPty = await openPtyPair(mkdtempSync(join(dir, 'untimed-')));
  const profilePath = join(dir, 'trail-camera.json');
  writeFileSync(profilePath, JSON.stringify(TRAIL_CAMERA_PROFILE));
  backend = await startBackend({
    dbPath,
    stations: stationsFromOptions({ ports: [pty.stationPath], profilePath, simulate: [] }),
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
  // Invented demo data: a 2S pack in constant current, rising 10 mV a second, heating half a
  // degree a second past the 45 °C top of the Li-ion window until the charger's fault output lights.
  for (let i = 0; i < LINES; i++) {
    const tempC = (38 + i * 0.5).toFixed(1);
    const flt = i >= LINES - 4 ? 1 : 0;
    pty.write(
      `t=${i} vbat=${(7.3 + i * 0.01).toFixed(2)} ibat=0.50 temp=${tempC} vin=12.1 iin=0.36 chg=1 flt=${flt}\n`,
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
  runId = backend.stations.get('bench-1')!.runId!;

  // The second station, added the way the dashboard adds one. A silence after 1 s of no line
  // (the profile's silenceS) makes any wall-clock silence check of its slow replay show.
  const added = await client.request('stations.add', {
    config: {
      id: 'bench-2',
      source: { kind: 'serial', path: untimedPty.stationPath, baudRate: 115200 },
      profile: { ...TRAIL_CAMERA_PROFILE, silenceS: 1 },
    },
  });
  assert.equal(added.ok, true, JSON.stringify(added));
  const isOpen = (p: { push: string; data: unknown }) =>
    p.push === 'station' &&
    (p.data as StationView).id === 'bench-2' &&
    (p.data as StationView).source.state === 'open';
  await client.waitForPush(isOpen);
  for (let i = 0; i < UNTIMED_LINES; i++) {
    untimedPty.write(`vbat=${(7.4 + i * 0.01).toFixed(2)} ibat=0.50 temp=25.0 chg=1 flt=0\n`);
    // Longer than the 4096-byte line cap: kept cut, rejected as line-too-long.
    if (i === CUT_AFTER - 1) untimedPty.write(`vbat=7.5 note=${'x'.repeat(5000)}\n`);
    await sleep(UNTIMED_SPACING_MS);
  }
  const untimedDeadline = Date.now() + 10_000;
  while (Date.now() < untimedDeadline && backend.stations.get('bench-2')!.lines < UNTIMED_LINES + 1)
    await sleep(50);
  untimedRunId = backend.stations.get('bench-2')!.runId!;
  backend.recorder!.flush();
});

after(async () => {
  await client?.close();
  await server?.close();
  await backend?.stop();
  await pty?.close();
  await untimedPty?.close();
  rmSync(dir, { recursive: true, force: true });
});

type DiagnosisReply = { t: number; causes: { code: string; confidence: number }[] };

test('the live station and its recorded run get the same diagnosis of the fault', async () => {
  const live = await client.request('stations.diagnose', { stationId: 'bench-1' });
  assert.equal(live.ok, true, JSON.stringify(live));
  const liveDiagnosis = (live as { result: DiagnosisReply }).result;
  const recorded = await client.request('runs.diagnose', { runId });
  assert.equal(recorded.ok, true, JSON.stringify(recorded));
  const recordedDiagnosis = (recorded as { result: DiagnosisReply }).result;
  for (const diagnosis of [liveDiagnosis, recordedDiagnosis]) {
    assert.ok(diagnosis.causes.length > 0, `a fault has causes: ${JSON.stringify(diagnosis)}`);
    // docs/codes.md: causes sorted by confidence, highest first.
    for (let i = 1; i < diagnosis.causes.length; i++)
      assert.ok(diagnosis.causes[i - 1].confidence >= diagnosis.causes[i].confidence);
  }
  // The pack heated past the 45 °C top of the Li-ion charge window (shared/chemistry/defaults.ts,
  // from the cell makers' datasheets) under the full set-point current: overtemperature leads.
  assert.equal(recordedDiagnosis.causes[0].code, 'overtemperature', JSON.stringify(recordedDiagnosis));
  assert.equal(liveDiagnosis.t, recordedDiagnosis.t);
  assert.deepEqual(liveDiagnosis.causes[0], recordedDiagnosis.causes[0]);
  assert.deepEqual(
    liveDiagnosis.causes.map((c) => c.code),
    recordedDiagnosis.causes.map((c) => c.code),
  );
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
  assert.equal(runs.result.length, 2, 'the two recorded runs, and no copy');
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

/** Replay a run in the app and wait until the replay has read its last line. */
async function replayInApp(id: number, speed: number | 'max'): Promise<StationView> {
  const reply = await client.request('runs.replay', { runId: id, speed });
  assert.equal(reply.ok, true, JSON.stringify(reply));
  const station = (reply as { result: StationView }).result;
  await client.waitForPush(
    (p) =>
      p.push === 'station' &&
      (p.data as StationView).id === station.id &&
      (p.data as StationView).source.detail.includes('finished'),
    20_000,
  );
  return stationView(station.id);
}

test('a run without device time replays in the app with the times and Ah of `taperline replay --db`', async () => {
  const { stdout } = await run(
    process.execPath,
    [BIN, 'replay', dbPath, '--run', String(untimedRunId), '--events'],
    {
      cwd: ROOT,
    },
  );
  const summary = JSON.parse(stdout.trim().split('\n').at(-1)!) as {
    type: string;
    durationS: number;
    ah: number;
    lines: number;
    rejected: number;
  };
  assert.equal(summary.type, 'summary');
  assert.equal(summary.lines, UNTIMED_LINES + 1);
  assert.equal(summary.rejected, 1);
  // The recording spans the lines' real spacing (the pty delivers them as written).
  assert.ok(summary.durationS >= ((UNTIMED_LINES - 1) * UNTIMED_SPACING_MS) / 1000 - 0.2, stdout);
  // Q = I·t: 0.5 A for the run's duration (the trapezoid of a constant current is exact).
  assert.ok(Math.abs(summary.ah - (0.5 * summary.durationS) / 3600) <= 0.00005 + 1e-9, stdout);

  for (const speed of ['max', 4] as const) {
    const replay = await replayInApp(untimedRunId, speed);
    // The CLI rounds durationS to 0.1 s and ah to 0.0001 Ah (main/cli/replay-format.ts).
    assert.ok(
      Math.abs(replay.state.t - summary.durationS) <= 0.05 + 1e-9,
      `speed ${speed}: ${replay.state.t} s vs ${summary.durationS} s`,
    );
    assert.ok(
      Math.abs(replay.state.metrics.ah - summary.ah) <= 0.00005 + 1e-9,
      `speed ${speed}: ${replay.state.metrics.ah} Ah vs ${summary.ah} Ah`,
    );
    assert.equal(replay.lines, summary.lines);
    assert.equal(replay.rejected, summary.rejected);
    const feed = client.pushes
      .filter((p) => p.push === 'lines' && (p.data as { stationId: string }).stationId === replay.id)
      .flatMap((p) => (p.data as { lines: FeedLine[] }).lines);
    const cut = feed.filter((l) => l.kind === 'rejected');
    assert.deepEqual(
      cut.map((l) => l.reason),
      ['line-too-long'],
      'the cut line stays a cut line in the replay',
    );
    assert.equal(feed.indexOf(cut[0]), CUT_AFTER);
    const removed = await client.request('stations.remove', { stationId: replay.id });
    assert.equal(removed.ok, true);
  }
});

test('a slow replay raises no silence the recording did not have', async () => {
  // At a quarter of the recorded pace the wall clock falls behind the recording's clock by
  // more than the profile's 1 s silence within two seconds; lines 150 ms apart are no silence.
  const reply = await client.request('runs.replay', { runId: untimedRunId, speed: 0.25 });
  assert.equal(reply.ok, true, JSON.stringify(reply));
  const station = (reply as { result: StationView }).result;
  await sleep(3500);
  const seen = (await stationView(station.id)).lines;
  assert.ok(seen >= 2 && seen < UNTIMED_LINES, `the replay is still running (${seen} lines read)`);
  const alarms = client.pushes
    .filter((p) => p.push === 'event' && (p.data as { stationId: string }).stationId === station.id)
    .map((p) => (p.data as { event: EngineEvent }).event)
    .filter((e) => e.type === 'alarm');
  assert.deepEqual(
    alarms.map((e) => (e.type === 'alarm' ? e.code : '')),
    [],
  );
  const removed = await client.request('stations.remove', { stationId: station.id });
  assert.equal(removed.ok, true);
});
