/**
 * Crash safety of a real `taperline record` process: kill -9 it mid-run, then check the
 * database file is sound, holds every line received a batch before the kill, and that the
 * next open closes the run as interrupted — or continues it when recording resumes soon.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { SerialPort } from 'serialport';
import { createAppService } from '../../main/app/service';
import { openRecorder } from '../../main/recorder';
import { createStationManager } from '../../main/station';
import { ptyPair, until } from './serial-pty';

const repo = resolve(__dirname, '..', '..');

/** The real CLI entry, as `taperline record` runs it. */
function startRecorder(args: string[]): { child: ChildProcess; out: () => string } {
  const child = spawn(
    process.execPath,
    ['--import', 'tsx', join(repo, 'main', 'cli', 'main.ts'), 'record', ...args],
    {
      cwd: repo,
      stdio: ['ignore', 'pipe', 'pipe'],
    },
  );
  let text = '';
  child.stdout?.on('data', (d: Buffer) => (text += d.toString()));
  child.stderr?.on('data', (d: Buffer) => (text += d.toString()));
  return { child, out: () => text };
}

async function openDevice(path: string): Promise<SerialPort> {
  const port = new SerialPort({ path, baudRate: 115200, autoOpen: false });
  await new Promise<void>((res, rej) => port.open((err) => (err ? rej(err) : res())));
  return port;
}
function write(port: SerialPort, data: string): Promise<void> {
  return new Promise((res, rej) =>
    port.write(data, (err) => (err ? rej(err) : port.drain((e) => (e ? rej(e) : res())))),
  );
}
const killed = (c: ChildProcess) =>
  new Promise<void>((res) =>
    c.exitCode !== null || c.signalCode !== null ? res() : c.once('exit', () => res()),
  );

/** An invented CC line (docs/telemetry.md key=value shape) for a boat's 4S LiFePO4 house battery. */
const line = (i: number) =>
  `t=${(i * 0.05).toFixed(2)} vbat=${(13.2 + i * 1e-4).toFixed(4)} ibat=5.000 temp=24.0`;

test('kill -9 mid-run: integrity ok, every line received a batch before the kill kept, run interrupted at the next open', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-crash-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const dbPath = join(dir, 'runs.sqlite');
  const profilePath = join(dir, 'boat.json');
  writeFileSync(
    profilePath,
    JSON.stringify({
      name: 'boat house battery 4S',
      chemistry: 'lifepo4',
      cells: 4,
      capacityAh: 100,
      chargeCurrentA: 20,
    }),
  );
  let child: ChildProcess | null = null;
  try {
    await pair.start();
    const run1 = startRecorder([
      '--port',
      pair.host,
      '--db',
      dbPath,
      '--profile',
      profilePath,
      '--resume-within',
      '0',
    ]);
    child = run1.child;
    await until(
      () => /open at 115200 baud/.test(run1.out()),
      30_000,
      `the recorder to open the port; output: ${run1.out()}`,
    );
    const device = await openDevice(pair.device);
    const sentAtMs: number[] = [];
    for (let i = 0; i < 100; i++) {
      await write(device, `${line(i)}\n`);
      sentAtMs.push(Date.now());
      await new Promise((r) => setTimeout(r, 25));
    }
    child.kill('SIGKILL');
    const killMs = Date.now();
    await killed(child);
    await new Promise<void>((r) => device.close(() => r()));

    const raw = new Database(dbPath, { readonly: true });
    // PRAGMA integrity_check returns the single row "ok" for a sound file (sqlite.org/pragma.html#pragma_integrity_check).
    assert.equal(raw.pragma('integrity_check', { simple: true }), 'ok');
    const stored = new Set(
      (raw.prepare('SELECT text FROM lines').all() as Array<{ text: string }>).map((r) => r.text),
    );
    raw.close();
    // A batch is committed at most 250 ms after a line arrives (the flush interval); 750 ms more
    // covers the pty transit and timers running late on a busy shared machine.
    const due = sentAtMs.map((ms, i) => [ms, i] as const).filter(([ms]) => ms < killMs - 1000);
    assert.ok(due.length >= 40, `${due.length} lines were due`);
    for (const [, i] of due)
      assert.ok(stored.has(line(i)), `line ${i} was received well before the kill and must be recorded`);

    const rec = openRecorder(dbPath);
    const runs = rec.listRuns();
    assert.equal(runs.length, 1);
    assert.equal(runs[0].endReason, 'interrupted');
    assert.equal(runs[0].stationLabel, pair.host);
    assert.ok(runs[0].lines >= due.length);
    rec.close();
  } finally {
    if (child) {
      child.kill('SIGKILL');
      await killed(child);
    }
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a recorder restarted soon after a crash continues the same run with one gap; SIGTERM closes it as stopped', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-crash-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const dbPath = join(dir, 'runs.sqlite');
  const profilePath = join(dir, 'boat.json');
  writeFileSync(
    profilePath,
    JSON.stringify({
      name: 'boat house battery 4S',
      chemistry: 'lifepo4',
      cells: 4,
      capacityAh: 100,
      chargeCurrentA: 20,
    }),
  );
  const children: ChildProcess[] = [];
  try {
    await pair.start();
    const args = ['--port', pair.host, '--db', dbPath, '--profile', profilePath, '--resume-within', '600'];
    const first = startRecorder(args);
    children.push(first.child);
    await until(() => /open at 115200 baud/.test(first.out()), 30_000, 'first recorder open');
    let device = await openDevice(pair.device);
    for (let i = 0; i < 10; i++) await write(device, `${line(i)}\n`);
    await new Promise((r) => setTimeout(r, 800));
    first.child.kill('SIGKILL');
    await killed(first.child);
    await new Promise<void>((r) => device.close(() => r()));

    const second = startRecorder(args);
    children.push(second.child);
    await until(() => /open at 115200 baud/.test(second.out()), 30_000, 'second recorder open');
    device = await openDevice(pair.device);
    for (let i = 40; i < 50; i++) await write(device, `${line(i)}\n`);
    await new Promise((r) => setTimeout(r, 800));
    second.child.kill('SIGTERM');
    await killed(second.child);
    await new Promise<void>((r) => device.close(() => r()));
    assert.equal(second.child.exitCode, 0, second.out());
    assert.match(second.out(), /run 1 closed as stopped, 20 lines/);

    const rec = openRecorder(dbPath);
    const runs = rec.listRuns();
    assert.deepEqual(
      runs.map((r) => [r.id, r.endReason, r.lines]),
      [[1, 'stopped', 20]],
    );
    const gaps = rec.events(1).filter((e) => e.type === 'gap');
    assert.equal(gaps.length, 1);
    assert.ok(gaps[0].type === 'gap' && gaps[0].endT !== null && gaps[0].endT > gaps[0].t);
    // The gap says why it is there and why the run was continued.
    assert.match(
      gaps[0].type === 'gap' ? gaps[0].reason : '',
      /recorder was not running \(crash or restart\); run continued: same station, still charging, pack voltage 13\.20\d V -> 13\.20\d V/,
    );
    assert.match(second.out(), /run 1 continues: same station, still charging/);
    assert.equal(rec.samples(1, 0, 1e9).length, 20);
    rec.close();
  } finally {
    for (const c of children) {
      c.kill('SIGKILL');
      await killed(c);
    }
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

const BOAT = {
  name: 'boat house battery 4S',
  chemistry: 'lifepo4',
  cells: 4,
  capacityAh: 100,
  chargeCurrentA: 20,
};

/** Record `lines` with a real `taperline record`, then kill -9 it; returns the database path. */
async function recordThenCrash(
  dir: string,
  pair: ReturnType<typeof ptyPair>,
  lines: string[],
): Promise<string> {
  const dbPath = join(dir, 'runs.sqlite');
  const profilePath = join(dir, 'boat.json');
  writeFileSync(profilePath, JSON.stringify(BOAT));
  const first = startRecorder(['--port', pair.host, '--db', dbPath, '--profile', profilePath]);
  try {
    await until(() => /open at 115200 baud/.test(first.out()), 30_000, 'recorder open');
    const device = await openDevice(pair.device);
    for (const l of lines) await write(device, `${l}\n`);
    // Two flush intervals (250 ms each) and slack for a busy machine.
    await new Promise((r) => setTimeout(r, 1000));
    await new Promise<void>((r) => device.close(() => r()));
  } finally {
    first.child.kill('SIGKILL');
    await killed(first.child);
  }
  return dbPath;
}

test('after kill -9, another pack on the same port (voltage not continuous) closes the old run as interrupted and starts a new one', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-crash-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const children: ChildProcess[] = [];
  try {
    await pair.start();
    const dbPath = await recordThenCrash(
      dir,
      pair,
      Array.from({ length: 10 }, (_, i) => line(i)),
    );
    const second = startRecorder(['--port', pair.host, '--db', dbPath, '--profile', join(dir, 'boat.json')]);
    children.push(second.child);
    await until(() => /open at 115200 baud/.test(second.out()), 30_000, 'second recorder open');
    const device = await openDevice(pair.device);
    // Invented: a discharged pack put on charge, 1.2 V below where the first one was.
    for (let i = 0; i < 5; i++) await write(device, `t=${60 + i}.0 vbat=12.000 ibat=5.000 temp=22.0\n`);
    await until(() => /run 2/.test(second.out()) || /stays closed/.test(second.out()), 10_000, 'the verdict');
    await new Promise((r) => setTimeout(r, 600));
    second.child.kill('SIGTERM');
    await killed(second.child);
    await new Promise<void>((r) => device.close(() => r()));
    assert.match(
      second.out(),
      /run 1, left open when the recorder stopped, stays closed as interrupted: pack voltage 13\.20\d V -> 12\.000 V is not continuous \(more than 0\.40 V apart; another pack\?\); a new run starts/,
    );
    const rec = openRecorder(dbPath);
    const byId = new Map(rec.listRuns().map((r) => [r.id, r]));
    assert.equal(byId.get(1)?.endReason, 'interrupted');
    assert.equal(byId.get(1)?.lines, 10);
    assert.equal(byId.get(2)?.endReason, 'stopped');
    assert.equal(byId.get(2)?.lines, 5);
    // The new run holds only the new pack: no gap from the old run, its own samples only.
    assert.equal(rec.samples(2, -1e9, 1e9).length, 5);
    assert.ok(rec.samples(2, -1e9, 1e9).every((s) => s.vbatV === 12));
    rec.close();
  } finally {
    for (const c of children) {
      c.kill('SIGKILL');
      await killed(c);
    }
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a run continued after kill -9 of `taperline serve` shows as one run in every view: history from the start, charge in equal to the run record', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-crash-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const dbPath = join(dir, 'runs.sqlite');
  const profilePath = join(dir, 'boat.json');
  writeFileSync(profilePath, JSON.stringify(BOAT));
  try {
    await pair.start();
    // `serve --station-port` records its station as bench-1.
    const serve = spawn(
      process.execPath,
      [
        '--import',
        'tsx',
        join(repo, 'main', 'cli', 'main.ts'),
        'serve',
        '--port',
        '0',
        '--db',
        dbPath,
        '--station-port',
        pair.host,
        '--profile',
        profilePath,
      ],
      { cwd: repo, stdio: ['ignore', 'ignore', 'ignore'] },
    );
    let stored = 0;
    try {
      const device = await openDevice(pair.device);
      // Lines sent before the server opens its port are flushed by the open; keep sending until 20 are stored.
      for (let i = 0; stored < 20 && i < 600; i++) {
        await write(device, `${line(i)}\n`);
        await new Promise((r) => setTimeout(r, 50));
        try {
          const raw = new Database(dbPath, { readonly: true, fileMustExist: true });
          stored = (raw.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n;
          raw.close();
        } catch {
          // Not created yet.
        }
      }
      await new Promise<void>((r) => device.close(() => r()));
    } finally {
      serve.kill('SIGKILL');
      await killed(serve);
    }
    assert.ok(stored >= 20, `${stored} lines stored before the crash`);

    // The app's own parts on the same file, as `taperline serve --db` wires them.
    const recorder = openRecorder(dbPath);
    const stations = createStationManager({ recorder });
    const service = createAppService({ stations, recorder });
    const problems: string[] = [];
    stations.on('problem', (p) => problems.push(p.message));
    let ahLive = NaN;
    let linesBefore = 0;
    try {
      linesBefore = recorder.getRun(1)?.lines ?? 0;
      assert.equal(recorder.getRun(1)?.endReason, 'interrupted');
      await stations.addStation({
        id: 'bench-1',
        label: pair.host,
        source: { kind: 'serial', path: pair.host, baudRate: 115200 },
        profile: BOAT,
      });
      await until(() => stations.list()[0]?.source.state === 'open', 10_000, 'open');
      const device = await openDevice(pair.device);
      for (let i = 700; i < 720; i++) await write(device, `${line(i)}\n`);
      await until(() => stations.list()[0]?.lines === linesBefore + 20, 10_000, 'the new lines in the run');
      await new Promise<void>((r) => device.close(() => r()));
      const snap = stations.list()[0];
      assert.equal(snap.runId, 1);
      assert.ok(
        problems.some((m) => /run 1 continues: same station, still charging/.test(m)),
        problems.join('\n'),
      );
      // The Bench view's "All" window is the live history: it starts where the run started.
      const history = (await service.handle('stations.history', { stationId: 'bench-1' })) as {
        runId: number;
        samples: { tS: number[] };
        events: Array<{ type: string }>;
      };
      assert.equal(history.runId, 1);
      recorder.flush();
      const recordedSamples = recorder.allSamples(1);
      assert.equal(history.samples.tS[0], recordedSamples[0].t);
      // The live history keeps one sample per second of run time (HISTORY_STEP_S).
      assert.ok((history.samples.tS.at(-1) ?? 0) > (recordedSamples.at(-1)?.t ?? Infinity) - 1);
      assert.ok(history.events.some((e) => e.type === 'gap'));
      ahLive = stations.list()[0].state.metrics.ah;
      assert.ok(ahLive > 0);
    } finally {
      service.close();
      await stations.close();
      recorder.close();
    }
    const rec = openRecorder(dbPath);
    const run = rec.getRun(1);
    assert.equal(run?.endReason, 'stopped');
    assert.equal(run?.lines, linesBefore + 20);
    // "Charge in" as the Bench view showed it (the live state) is the run's recorded figure.
    assert.equal(run?.ah, ahLive);
    assert.equal(rec.listRuns().length, 1);
    rec.close();
  } finally {
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});
