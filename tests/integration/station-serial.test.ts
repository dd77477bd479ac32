/**
 * Stations on real pty pairs (socat) with the real serialport binding, recording into a
 * real SQLite file: runs, unplug/replug as one gap, bad input on the wire, several
 * stations at once, sending, profile change and close.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { SerialPort } from 'serialport';
import { openRecorder } from '../../main/recorder';
import { createStationManager, MAX_STATIONS, StationConfigError } from '../../main/station';
import type { StationManagerEvents } from '../../main/station/types';
import { ptyPair, until, type PtyPair } from './serial-pty';

// Invented demo scenario: a garden sensor's 2S Li-ion pack (docs/profile.md keys).
const PROFILE = {
  name: 'garden sensor 2S',
  chemistry: 'li-ion',
  cells: 2,
  capacityAh: 2.5,
  chargeCurrentA: 1.0,
  terminationA: 0.1,
};

/** An invented CC line in the key=value shape of docs/telemetry.md. */
const ccLine = (t: number) =>
  `t=${t} vbat=${(7.4 + t * 0.001).toFixed(3)} ibat=1.000 temp=25.0 vin=12.0 iin=0.7 chg=1 flt=0`;

async function openDevice(path: string): Promise<SerialPort> {
  const port = new SerialPort({ path, baudRate: 115200, autoOpen: false });
  await new Promise<void>((resolve, reject) => port.open((err) => (err ? reject(err) : resolve())));
  return port;
}
function write(port: SerialPort, data: string | Buffer): Promise<void> {
  return new Promise((resolve, reject) =>
    port.write(data, (err) => (err ? reject(err) : port.drain((e) => (e ? reject(e) : resolve())))),
  );
}
function closePort(port: SerialPort): Promise<void> {
  return new Promise((resolve) => (port.isOpen ? port.close(() => resolve()) : resolve()));
}

function record<K extends keyof StationManagerEvents>(
  m: ReturnType<typeof createStationManager>,
  name: K,
): StationManagerEvents[K][0][] {
  const out: StationManagerEvents[K][0][] = [];
  (m.on as (n: K, l: (x: StationManagerEvents[K][0]) => void) => void)(name, (x) => out.push(x));
  return out;
}

test('a station records a run; unplug and replug keep the run and record one gap', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-station-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const dbPath = join(dir, 'runs.sqlite');
  const recorder = openRecorder(dbPath);
  const manager = createStationManager({ recorder });
  const lines = record(manager, 'line');
  const sources = record(manager, 'source');
  const events = record(manager, 'event');
  try {
    await pair.start();
    const snap = await manager.addStation({
      id: 'bench-1',
      label: 'garden sensor',
      source: { kind: 'serial', path: pair.host, baudRate: 115200 },
      profile: PROFILE,
    });
    assert.ok(snap.runId !== null);
    await until(() => sources.some((s) => s.status.state === 'open'), 5000, 'port open');
    let device = await openDevice(pair.device);
    for (let t = 0; t < 5; t++) await write(device, `${ccLine(t)}\n`);
    await until(() => lines.length === 5, 5000, 'five lines');
    await closePort(device);

    await pair.unplug();
    await until(() => sources.some((s) => s.status.state === 'lost'), 5000, 'lost');
    await new Promise((r) => setTimeout(r, 300));
    await pair.start();
    await until(() => sources.filter((s) => s.status.state === 'open').length === 2, 15_000, 'open again');
    device = await openDevice(pair.device);
    for (let t = 20; t < 25; t++) await write(device, `${ccLine(t)}\n`);
    await until(() => lines.length === 10, 5000, 'lines after the replug');
    await closePort(device);

    const now = manager.get('bench-1');
    assert.equal(now?.runId, snap.runId, 'the same run continues');
    assert.equal(now?.lines, 10);
    assert.equal(now?.state.phase, 'cc');
    const gaps = events.filter((e) => e.event.type === 'gap');
    assert.equal(gaps.length, 2, 'the gap is announced when it starts and when it ends');
    await manager.close();
    recorder.close();

    const db = new Database(dbPath, { readonly: true });
    const runs = db.prepare('SELECT id, end_reason, lines FROM runs').all() as Array<{
      id: number;
      end_reason: string;
      lines: number;
    }>;
    assert.deepEqual(runs, [{ id: snap.runId, end_reason: 'stopped', lines: 10 }]);
    const gapRows = db.prepare("SELECT t, end_t, json FROM events WHERE type = 'gap'").all() as Array<{
      t: number;
      end_t: number;
      json: string;
    }>;
    assert.equal(gapRows.length, 1, 'one gap row in the run');
    assert.ok(gapRows[0].end_t > gapRows[0].t);
    assert.match(JSON.parse(gapRows[0].json).reason, /lines lost during the gap: unknown/);
    assert.equal((db.prepare('SELECT count(*) AS n FROM samples').get() as { n: number }).n, 10);
    assert.equal((db.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n, 10);
    db.close();
  } finally {
    await manager.close();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('bad input on the wire (random bytes, wrong baud rate noise, a 10 MB burst) is counted with reasons and kept', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-station-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const dbPath = join(dir, 'runs.sqlite');
  const recorder = openRecorder(dbPath);
  const manager = createStationManager({ recorder });
  const lines = record(manager, 'line');
  const sources = record(manager, 'source');
  try {
    await pair.start();
    const snap = await manager.addStation({
      id: 'bench-2',
      source: { kind: 'serial', path: pair.host, baudRate: 115200 },
      profile: PROFILE,
    });
    await until(() => sources.some((s) => s.status.state === 'open'), 5000, 'port open');
    const device = await openDevice(pair.device);
    await write(device, `${ccLine(0)}\n`);
    // What a wrong baud rate looks like: bytes with the high bit and control bits set.
    await write(device, Buffer.from([0xf8, 0x80, 0x1e, 0xfe, 0x00, 0x9c, 0x0a]));
    // Seeded pseudo-random bytes (a fixed LCG, so the test is deterministic), ending in a newline.
    let x = 12345;
    const noise = Buffer.alloc(2000, 0).map(() => ((x = (x * 1103515245 + 12345) & 0x7fffffff), x & 0xff));
    await write(device, Buffer.concat([noise, Buffer.from('\n')]));
    await write(device, Buffer.concat([Buffer.alloc(10 * 1024 * 1024, 0x35), Buffer.from('\n')]));
    await write(device, `${ccLine(1)}\n`);
    await until(
      () => lines.some((l) => l.line.text === ccLine(1)),
      30_000,
      'the good line after the garbage',
    );
    await closePort(device);
    const st = manager.get('bench-2');
    assert.ok(st);
    assert.equal(st.state.last?.t, 1, 'both good lines were accepted');
    assert.ok(st.rejected >= 3, `rejected ${st.rejected}`);
    const reasons = new Set(lines.filter((l) => l.line.kind === 'rejected').map((l) => l.line.reason));
    // docs/telemetry.md reject reasons: the cut burst, and the noise as not-text.
    assert.ok(reasons.has('line-too-long'));
    assert.ok(reasons.has('not-text'));
    await manager.close();
    recorder.close();
    const db = new Database(dbPath, { readonly: true });
    const kept = db
      .prepare('SELECT kind, reason, too_long, length(text) AS len FROM lines WHERE run_id = ? ORDER BY id')
      .all(snap.runId) as Array<{
      kind: string;
      reason: string | null;
      too_long: number;
      len: number;
    }>;
    assert.equal(kept[0].kind, 'sample');
    assert.equal(kept.at(-1)?.kind, 'sample');
    const cut = kept.find((k) => k.too_long === 1);
    assert.deepEqual(cut && [cut.reason, cut.len], ['line-too-long', 4096]);
    assert.equal(kept.filter((k) => k.kind === 'rejected').length, st.rejected);
    db.close();
  } finally {
    await manager.close();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('sixteen stations at once: a broken port does not hold up the others; a seventeenth is refused', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-station-'));
  const pairs: PtyPair[] = Array.from({ length: 6 }, (_, i) =>
    ptyPair(join(dir, `dev${i}`), join(dir, `host${i}`)),
  );
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const manager = createStationManager({ recorder });
  const lines = record(manager, 'line');
  const sources = record(manager, 'source');
  const devices: SerialPort[] = [];
  try {
    for (const p of pairs) await p.start();
    for (let i = 0; i < MAX_STATIONS; i++) {
      // Six live ports, ten that do not exist (unplugged chargers): they keep retrying on their own.
      const path = i < pairs.length ? pairs[i].host : join(dir, `missing${i}`);
      await manager.addStation({
        id: `bench-${i}`,
        source: { kind: 'serial', path, baudRate: 115200 },
        profile: PROFILE,
      });
    }
    await assert.rejects(
      manager.addStation({
        id: 'bench-extra',
        source: { kind: 'serial', path: join(dir, 'x'), baudRate: 115200 },
        profile: PROFILE,
      }),
      (err: unknown) => err instanceof StationConfigError && /at most 16 stations/.test(err.message),
    );
    await until(
      () =>
        new Set(sources.filter((s) => s.status.state === 'open').map((s) => s.stationId)).size ===
        pairs.length,
      10_000,
      'live ports open',
    );
    for (const p of pairs) devices.push(await openDevice(p.device));
    for (let t = 0; t < 10; t++) await Promise.all(devices.map((d) => write(d, `${ccLine(t)}\n`)));
    await until(() => lines.length === pairs.length * 10, 10_000, 'every live station got its lines');
    const runs = new Set(manager.list().map((s) => s.runId));
    assert.equal(runs.size, MAX_STATIONS, 'one run per station');
    for (let i = 0; i < pairs.length; i++) assert.equal(manager.get(`bench-${i}`)?.lines, 10);
    for (let i = pairs.length; i < MAX_STATIONS; i++)
      assert.equal(manager.get(`bench-${i}`)?.source.state, 'connecting');
  } finally {
    for (const d of devices) await closePort(d);
    await manager.close();
    recorder.close();
    for (const p of pairs) await p.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('send records the sent line; a profile change closes the run and starts another; a bad profile names its key', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-station-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const manager = createStationManager({ recorder });
  const sources = record(manager, 'source');
  const lines = record(manager, 'line');
  try {
    await pair.start();
    await assert.rejects(
      manager.addStation({
        id: 'bad',
        source: { kind: 'serial', path: pair.host, baudRate: 115200 },
        profile: { ...PROFILE, cellz: 3 },
      }),
      (err: unknown) => err instanceof StationConfigError && err.key === 'cellz' && /cellz/.test(err.message),
    );
    const first = await manager.addStation({
      id: 'bench-3',
      source: { kind: 'serial', path: pair.host, baudRate: 115200 },
      profile: PROFILE,
    });
    await until(() => sources.some((s) => s.status.state === 'open'), 5000, 'port open');
    const device = await openDevice(pair.device);
    const got: Buffer[] = [];
    device.on('data', (d: Buffer) => got.push(d));
    await write(device, `${ccLine(0)}\n`);
    await until(() => lines.length === 1, 5000, 'first line');
    await manager.send('bench-3', 'rate 0.5', '\r\n');
    await until(() => Buffer.concat(got).toString() === 'rate 0.5\r\n', 5000, 'sent bytes at the device');
    assert.deepEqual(lines.at(-1)?.line.kind, 'sent');

    const second = await manager.setProfile('bench-3', {
      ...PROFILE,
      name: 'garden sensor 2S, slower',
      chargeCurrentA: 0.5,
    });
    assert.notEqual(second.runId, first.runId);
    assert.equal(second.profile.chargeCurrentA, 0.5);
    await write(device, `${ccLine(1)}\n`);
    await until(() => manager.get('bench-3')?.lines === 1, 5000, 'a line in the new run');
    await closePort(device);
    await manager.close();
    assert.equal(recorder.getRun(first.runId as number)?.endReason, 'profile-changed');
    assert.equal(recorder.getRun(second.runId as number)?.endReason, 'stopped');
    assert.deepEqual(
      recorder.rawLines(first.runId as number).map((l) => [l.kind, l.text]),
      [
        ['sample', ccLine(0)],
        ['sent', 'rate 0.5'],
      ],
    );
    assert.equal(
      [...recorder.lineIterator(first.runId as number)].length,
      1,
      'a sent line is not a received one',
    );
    assert.equal(
      recorder.profileOf(second.runId as number) &&
        (recorder.profileOf(second.runId as number) as { chargeCurrentA: number }).chargeCurrentA,
      0.5,
    );
  } finally {
    await manager.close();
    recorder.close();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('without a profile the pack is assumed from the first pack voltage, and the run starts there', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-station-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const recorder = openRecorder(join(dir, 'runs.sqlite'));
  const manager = createStationManager({ recorder });
  const sources = record(manager, 'source');
  const problems = record(manager, 'problem');
  try {
    await pair.start();
    const snap = await manager.addStation({
      id: 'bench-4',
      source: { kind: 'serial', path: pair.host, baudRate: 115200 },
      profile: null,
    });
    assert.equal(snap.runId, null);
    await until(() => sources.some((s) => s.status.state === 'open'), 5000, 'port open');
    const device = await openDevice(pair.device);
    await write(device, '# boot fw 0.3\n');
    await write(device, `${ccLine(0)}\n`);
    await until(() => manager.get('bench-4')?.runId !== null, 5000, 'run started');
    await closePort(device);
    const st = manager.get('bench-4');
    // 7.400 V / 3.7 V per cell nominal (common practice) = 2 cells.
    assert.equal(st?.profile.cells, 2);
    assert.equal(st?.lines, 2);
    assert.match(
      problems.map((p) => p.message).join('\n'),
      /assuming a 2-cell Li-ion pack from the first pack voltage 7\.40 V/,
    );
    await manager.close();
    assert.deepEqual(recorder.profileOf(st?.runId as number), {
      name: 'assumed 2S li-ion',
      chemistry: 'li-ion',
      cells: 2,
    });
    assert.deepEqual(
      recorder.rawLines(st?.runId as number).map((l) => l.kind),
      ['firmware', 'sample'],
    );
  } finally {
    await manager.close();
    recorder.close();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});
