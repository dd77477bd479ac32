/**
 * Recording when the disk fills up, a size limit hits, or the folder is read-only: a clear
 * message and a critical problem, the live display goes on, and nothing recorded is damaged.
 * Uses a small tmpfs mount where this machine allows it (root), and otherwise a child
 * process with a file-size limit (RLIMIT_FSIZE, SIGXFSZ ignored).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync, spawn } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import Database from 'better-sqlite3';
import { SerialPort } from 'serialport';
import { openRecorder, RecorderOpenError } from '../../main/recorder';
import { createStationManager } from '../../main/station';
import { ptyPair, until } from './serial-pty';

const repo = resolve(__dirname, '..', '..');

function tryMount(dir: string, options: string): boolean {
  try {
    execFileSync('mount', ['-t', 'tmpfs', '-o', options, 'tmpfs', dir], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}
function umount(dir: string): void {
  try {
    execFileSync('umount', [dir], { stdio: 'ignore' });
  } catch {
    // Not mounted.
  }
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

// Invented CC lines of a weather station's 3S Li-ion pack, padded with an extra channel so the file grows fast.
const line = (i: number) =>
  `t=${i} vbat=${(11.1 + i * 1e-5).toFixed(5)} ibat=0.800 temp=21.5 note=${'x'.repeat(300)}`;

const mountable = (() => {
  const probe = mkdtempSync(join(tmpdir(), 'taperline-mnt-probe-'));
  const ok = tryMount(probe, 'size=64k');
  umount(probe);
  rmSync(probe, { recursive: true, force: true });
  return ok;
})();

test(
  'disk full on a small tmpfs: critical problem, live lines go on, rows kept and written once space is back',
  { skip: !mountable && 'mounting a tmpfs needs root here; the RLIMIT_FSIZE test covers the same path' },
  async () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-full-'));
    const mnt = join(dir, 'mnt');
    mkdirSync(mnt);
    const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
    assert.ok(tryMount(mnt, 'size=1m'));
    // Leave about 256 KiB free for the database.
    writeFileSync(join(mnt, 'filler'), Buffer.alloc(768 * 1024));
    const dbPath = join(mnt, 'runs.sqlite');
    const recorder = openRecorder(dbPath, { retryMs: 100 });
    const manager = createStationManager({ recorder });
    const problems: Array<{ level: string; message: string }> = [];
    manager.on('problem', (p) => problems.push(p));
    let linesSeen = 0;
    manager.on('line', () => linesSeen++);
    try {
      await pair.start();
      await manager.addStation({
        id: 'bench-9',
        label: 'weather station',
        source: { kind: 'serial', path: pair.host, baudRate: 115200 },
        profile: { chemistry: 'li-ion', cells: 3 },
      });
      await until(() => manager.get('bench-9')?.source.state === 'open', 5000, 'open');
      const device = await openDevice(pair.device);
      let i = 0;
      while (!problems.some((p) => p.level === 'critical') && i < 5000) {
        await write(device, `${line(i++)}\n`);
        if (i % 20 === 0) await new Promise((r) => setTimeout(r, 30));
      }
      const critical = problems.find((p) => p.level === 'critical');
      assert.ok(critical, 'the disk filled up and was reported');
      assert.match(critical.message, /recording stopped: (the disk holding .* is full|writing .* failed)/);
      assert.match(critical.message, /live display continues and everything already recorded is intact/);
      assert.equal(manager.get('bench-9')?.recording.ok, false);
      // The live side keeps going while the disk is full.
      const before = linesSeen;
      for (let k = 0; k < 20; k++) await write(device, `${line(i++)}\n`);
      await until(() => linesSeen >= before + 20, 5000, 'live lines while the disk is full');
      const sent = i;
      rmSync(join(mnt, 'filler'));
      await until(() => problems.some((p) => /works again/.test(p.message)), 10_000, 'recovery');
      assert.equal(manager.get('bench-9')?.recording.ok, true);
      await new Promise<void>((r) => device.close(() => r()));
      await manager.close();
      recorder.close();
      const db = new Database(dbPath, { readonly: true });
      // PRAGMA integrity_check returns the single row "ok" for a sound file (sqlite.org/pragma.html#pragma_integrity_check).
      assert.equal(db.pragma('integrity_check', { simple: true }), 'ok');
      // Retried, not dropped: every line is in the file.
      assert.equal((db.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n, sent);
      db.close();
    } finally {
      await manager.close();
      await pair.stop();
      umount(mnt);
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

test(
  'a read-only folder is refused at open with a sentence, not a stack trace',
  { skip: !mountable && 'mounting a tmpfs needs root here' },
  () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-ro-'));
    try {
      assert.ok(tryMount(dir, 'size=64k,ro'));
      assert.throws(
        () => openRecorder(join(dir, 'runs.sqlite')),
        (err: unknown) =>
          err instanceof RecorderOpenError &&
          /read-only/.test(err.message) &&
          /nothing was recorded/.test(err.message),
      );
    } finally {
      umount(dir);
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

test('a file-size limit (RLIMIT_FSIZE) in a child process: critical problem with a clear message, file intact', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-fsize-'));
  try {
    const dbPath = join(dir, 'runs.sqlite');
    const script = join(dir, 'child.ts');
    writeFileSync(
      script,
      [
        `import { openRecorder } from ${JSON.stringify(join(repo, 'main', 'recorder'))};`,
        `const rec = openRecorder(${JSON.stringify(dbPath)}, { retryMs: 50 });`,
        `rec.on('problem', (p) => { console.log(JSON.stringify({ problem: p, health: rec.health() })); process.exit(0); });`,
        `const { runId } = rec.startRun({ stationId: 'bench-7', stationLabel: 'trail camera', profileName: 'p', chemistry: 'li-ion', profileJson: { chemistry: 'li-ion', cells: 2 }, startRxS: 1 });`,
        `let i = 0;`,
        `const timer = setInterval(() => { for (let k = 0; k < 200; k++, i++) rec.addLine(runId, { rxS: 1 + i, text: 'vbat=7.4 pad=' + 'y'.repeat(400), kind: 'sample' }); rec.flush(); }, 5);`,
        `setTimeout(() => { clearInterval(timer); console.log(JSON.stringify({ noProblem: true })); process.exit(1); }, 20000);`,
      ].join('\n'),
    );
    // bash counts `ulimit -f` in 1024-byte blocks (bash manual, the ulimit builtin): a 1 MiB file limit.
    const child = spawn(
      'bash',
      ['-c', `ulimit -f 1024; trap '' XFSZ; exec "${process.execPath}" --import tsx "${script}"`],
      { cwd: repo, stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let out = '';
    child.stdout.on('data', (d: Buffer) => (out += d.toString()));
    child.stderr.on('data', (d: Buffer) => (out += d.toString()));
    const code = await new Promise<number | null>((res) => child.on('exit', (c) => res(c)));
    assert.equal(code, 0, out);
    const report = JSON.parse(out.trim().split('\n').at(-1) as string) as {
      problem: { level: string; message: string };
      health: { ok: boolean; pending: number };
    };
    assert.equal(report.problem.level, 'critical');
    assert.match(
      report.problem.message,
      /recording stopped: (writing .* failed \(.*disk full, a file size limit or a failing disk\)|the disk holding .* is full)/,
    );
    assert.equal(report.health.ok, false);
    assert.ok(report.health.pending > 0, 'the failed batch is kept for retry');
    const db = new Database(dbPath, { readonly: true });
    // PRAGMA integrity_check returns the single row "ok" for a sound file (sqlite.org/pragma.html#pragma_integrity_check).
    assert.equal(db.pragma('integrity_check', { simple: true }), 'ok');
    assert.ok((db.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n > 0);
    db.close();
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test(
  'Ctrl-C on `taperline record` while the disk is full: the count on stderr, the rows in a spill file, exit 1; the next open imports them and closes the run',
  { skip: !mountable && 'mounting a tmpfs needs root here' },
  async () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-fullstop-'));
    const mnt = join(dir, 'mnt');
    mkdirSync(mnt);
    const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
    assert.ok(tryMount(mnt, 'size=1m'));
    const profilePath = join(dir, 'weather.json');
    writeFileSync(profilePath, JSON.stringify({ name: 'weather station 3S', chemistry: 'li-ion', cells: 3 }));
    const dbPath = join(mnt, 'runs.sqlite');
    let spill: string | null = null;
    try {
      await pair.start();
      const child = spawn(
        process.execPath,
        [
          '--import',
          'tsx',
          join(repo, 'main', 'cli', 'main.ts'),
          'record',
          '--port',
          pair.host,
          '--db',
          dbPath,
          '--profile',
          profilePath,
          '--status-every',
          '0.2',
        ],
        { cwd: repo, stdio: ['ignore', 'pipe', 'pipe'] },
      );
      let out = '';
      let err = '';
      child.stdout.on('data', (d: Buffer) => (out += d.toString()));
      child.stderr.on('data', (d: Buffer) => (err += d.toString()));
      const exited = new Promise<number | null>((res) => child.on('exit', (c) => res(c)));
      await until(
        () => /open at 115200 baud/.test(out),
        30_000,
        `the recorder to open the port: ${out}${err}`,
      );
      // Fill the disk once the database exists: about 256 KiB stay free for it.
      writeFileSync(join(mnt, 'filler'), Buffer.alloc(700 * 1024));
      const device = await openDevice(pair.device);
      let i = 0;
      while (!/CRITICAL: recording stopped/.test(out) && i < 5000) {
        await write(device, `${line(i++)}\n`);
        if (i % 20 === 0) await new Promise((r) => setTimeout(r, 30));
      }
      assert.match(out, /CRITICAL: recording stopped/);
      for (let k = 0; k < 30; k++) await write(device, `${line(i++)}\n`);
      const sent = i;
      await until(() => out.includes(`| ${sent} lines |`), 10_000, `all ${sent} lines received`);
      await new Promise<void>((r) => device.close(() => r()));
      child.kill('SIGINT');
      const code = await exited;
      assert.equal(code, 1, `${out}\n${err}`);
      const said =
        /taperline: (\d+) rows could not be written to .* They were saved to (\S+\.ndjson); the next/.exec(
          err,
        );
      assert.ok(said, err);
      spill = said[2];
      assert.ok(Number(said[1]) > 0);
      assert.ok(existsSync(spill));
      assert.doesNotMatch(out, /closed as stopped/);
      assert.match(out, /run 1 stopped, not all of it in the database/);

      // Space again: the next open imports the spill, deletes it, and the run is whole and closed.
      rmSync(join(mnt, 'filler'));
      const rec = openRecorder(dbPath);
      assert.deepEqual(rec.importedSpills, [{ path: spill, rows: Number(said[1]) }]);
      assert.equal(existsSync(spill), false);
      const run = rec.getRun(1);
      assert.equal(run?.endReason, 'stopped');
      assert.equal(run?.lines, sent);
      const db = new Database(dbPath, { readonly: true });
      assert.equal((db.prepare('SELECT count(*) AS n FROM lines').get() as { n: number }).n, sent);
      assert.equal((db.prepare('SELECT count(*) AS n FROM samples').get() as { n: number }).n, sent);
      db.close();
      rec.close();
    } finally {
      if (spill) rmSync(spill, { force: true });
      await pair.stop();
      umount(mnt);
      rmSync(dir, { recursive: true, force: true });
    }
  },
);
