/**
 * `taperline record` end to end (node main/cli/main.ts, the real CLI entry): a live status
 * line per station in place on a terminal, plain periodic lines otherwise, a clean close on
 * Ctrl-C / SIGTERM, and one-line usage errors.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { SerialPort } from 'serialport';
import { openRunReader } from '../../main/recorder';
import { ptyPair, until } from './serial-pty';

const ESC = String.fromCharCode(0x1b);
const repo = resolve(__dirname, '..', '..');
const cli = ['--import', 'tsx', join(repo, 'main', 'cli', 'main.ts')];

function run(args: string[], viaTerminal = false): { child: ChildProcess; out: () => string } {
  const child = viaTerminal
    ? // util-linux `script` gives the command a real terminal; its stdin is that terminal's keyboard.
      spawn(
        'script',
        ['-qfec', [process.execPath, ...cli, ...args].map((a) => `'${a}'`).join(' '), '/dev/null'],
        { cwd: repo, stdio: ['pipe', 'pipe', 'pipe'] },
      )
    : spawn(process.execPath, [...cli, ...args], { cwd: repo, stdio: ['ignore', 'pipe', 'pipe'] });
  let text = '';
  child.stdout?.on('data', (d: Buffer) => (text += d.toString()));
  child.stderr?.on('data', (d: Buffer) => (text += d.toString()));
  return { child, out: () => text };
}
const exited = (c: ChildProcess) =>
  new Promise<number | null>((res) =>
    c.exitCode !== null ? res(c.exitCode) : c.once('exit', (code) => res(code)),
  );

async function writeLines(path: string, lines: string[]): Promise<void> {
  const port = new SerialPort({ path, baudRate: 115200, autoOpen: false });
  await new Promise<void>((res, rej) => port.open((e) => (e ? rej(e) : res())));
  await new Promise<void>((res, rej) =>
    port.write(lines.map((l) => `${l}\n`).join(''), (e) =>
      e ? rej(e) : port.drain((d) => (d ? rej(d) : res())),
    ),
  );
  await new Promise<void>((res) => port.close(() => res()));
}

// Invented: a fence monitor's 2S Li-ion pack in CC (docs/telemetry.md key=value shape).
const PROFILE = { name: 'fence monitor 2S', chemistry: 'li-ion', cells: 2, capacityAh: 3, chargeCurrentA: 1 };
const manyPorts = (n: number) =>
  Array.from({ length: n }, (_, i) => ['--port', join(tmpdir(), `taperline-no-port-${i}`)]).flat();
const LINES = ['t=0 vbat=7.400 ibat=1.000 temp=25.0', 't=1 vbat=7.401 ibat=1.000 temp=25.1'];

test('without a terminal: plain status lines every --status-every seconds; SIGTERM closes the run as stopped', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-reccli-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const db = join(dir, 'runs.sqlite');
  const profile = join(dir, 'p.json');
  writeFileSync(profile, JSON.stringify(PROFILE));
  let child: ChildProcess | null = null;
  try {
    await pair.start();
    const rec = run(['record', '--port', pair.host, '--db', db, '--profile', profile, '--status-every', '1']);
    child = rec.child;
    await until(() => /open at 115200 baud/.test(rec.out()), 30_000, 'port open');
    await writeLines(pair.device, LINES);
    await until(
      () =>
        /\| cc \| 7\.401 V \| 1\.000 A \| 25\.1 °C \| [0-9.]+ Ah \| 2 lines \| run 1 \| no alarms/.test(
          rec.out(),
        ),
      10_000,
      `a status line: ${rec.out()}`,
    );
    // Plain lines start with an ISO 8601 time stamp and never use cursor movement.
    assert.match(rec.out(), /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z \S+ \| open \|/m);
    assert.ok(!rec.out().includes(`${ESC}[`), 'no terminal escapes in plain mode');
    assert.match(rec.out(), /Caution: charging lithium and lead-acid cells can start fires/);
    child.kill('SIGTERM');
    assert.equal(await exited(child), 0, rec.out());
    assert.match(rec.out(), new RegExp(`${pair.host}: run 1 closed as stopped, 2 lines \\(0 rejected\\)`));
    const reader = openRunReader(db);
    assert.deepEqual(
      reader.listRuns().map((r) => [r.endReason, r.lines, r.profileName]),
      [['stopped', 2, 'fence monitor 2S']],
    );
    reader.close();
  } finally {
    child?.kill('SIGKILL');
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('on a terminal: the status line is redrawn in place, and Ctrl-C closes the run cleanly', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-reccli-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const db = join(dir, 'runs.sqlite');
  let child: ChildProcess | null = null;
  try {
    await pair.start();
    const rec = run(['record', '--port', pair.host, '--db', db], true);
    child = rec.child;
    await until(() => /open at 115200 baud/.test(rec.out()), 30_000, 'port open');
    await writeLines(pair.device, LINES);
    await until(() => /\| cc \| 7\.401 V/.test(rec.out()), 10_000, 'a status line');
    // ECMA-48 CUU (ESC [ n A) moves the cursor up over the previous status block before redrawing.
    assert.ok(rec.out().includes(`${ESC}[1A`), 'cursor up over the status block');
    assert.match(rec.out(), /assuming a 2-cell Li-ion pack from the first pack voltage 7\.40 V/);
    // ETX (0x03) typed on the terminal: the line discipline sends SIGINT, as a real Ctrl-C does.
    child.stdin?.write('\x03');
    await until(() => /closed as stopped/.test(rec.out()), 15_000, `the clean close: ${rec.out()}`);
    await exited(child);
    const reader = openRunReader(db);
    assert.equal(reader.listRuns()[0]?.endReason, 'stopped');
    reader.close();
  } finally {
    child?.kill('SIGKILL');
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a database that cannot be opened is said in one sentence, and the live status goes on without recording', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-reccli-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const blocker = join(dir, 'not-a-folder');
  writeFileSync(blocker, 'a file where the database folder should be');
  let child: ChildProcess | null = null;
  try {
    await pair.start();
    const rec = run([
      'record',
      '--port',
      pair.host,
      '--db',
      join(blocker, 'runs.sqlite'),
      '--status-every',
      '1',
    ]);
    child = rec.child;
    await until(() => /open at 115200 baud/.test(rec.out()), 30_000, 'port open');
    assert.match(
      rec.out(),
      /^taperline: .*nothing was recorded — fix that or give another --db FILE\. The live display continues without recording\.$/m,
    );
    await writeLines(pair.device, LINES);
    await until(
      () => /\| cc \| 7\.401 V .*\| NOT RECORDING \|/.test(rec.out()),
      10_000,
      `a status line: ${rec.out()}`,
    );
    child.kill('SIGTERM');
    assert.equal(await exited(child), 0, rec.out());
    assert.match(rec.out(), /: not recorded, 2 lines/);
  } finally {
    child?.kill('SIGKILL');
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('usage errors are one line on standard error with exit status 2', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-reccli-'));
  try {
    const bad = join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify({ ...PROFILE, chargeCurentA: 1 }));
    const cases: Array<[string[], RegExp]> = [
      [
        ['record', '--port', join(dir, 'p'), '--profile', bad],
        /^taperline: profile .*bad\.json refused: chargeCurentA: unknown key/,
      ],
      [
        ['record', '--port', join(dir, 'p'), '--baud', 'fast'],
        /^taperline: --baud must be a positive whole number/,
      ],
      [
        ['record', '--port', join(dir, 'p'), '--profile', join(dir, 'missing.json')],
        /^taperline: no such profile file: /,
      ],
      // Blank text used to be read as 0 seconds.
      [
        ['record', '--port', join(dir, 'p'), '--status-every', ''],
        /^taperline: --status-every must be a non-negative number of seconds \(got ""\)$/m,
      ],
      [
        ['record', '--port', join(dir, 'p'), '--resume-within', 'soon'],
        /^taperline: --resume-within must be a non-negative number of seconds \(got "soon"\)$/m,
      ],
      // One more port than a station manager holds (MAX_STATIONS = 16): refused before any port
      // opens or any run starts, so nothing is left open.
      [
        ['record', '--db', join(dir, 'many.sqlite'), ...manyPorts(17)],
        /^taperline: at most 16 stations can record at once \(got 17 --port paths\); nothing was recorded/,
      ],
    ];
    for (const [args, want] of cases) {
      const r = run(args);
      assert.equal(await exited(r.child), 2, r.out());
      assert.match(r.out(), want);
      assert.equal(r.out().trim().split('\n').length, 1, r.out());
    }
    assert.ok(!existsSync(join(dir, 'many.sqlite')), 'no database was opened for a refused port list');
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
