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
import { openRecorder } from '../../main/recorder';
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
