/**
 * `taperline simulate` through the real CLI entry: listing, usage errors (one line, exit 2),
 * whole scenarios to a file with the profile beside them, and live streaming to a real pty
 * pair made with socat, including a command answered over it and a clean Ctrl-C.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { SerialPort } from 'serialport';
import { getScenario, SCENARIO_NAMES, simulatedLines } from '../../main/simulator';

const ROOT = join(__dirname, '..', '..');
const ENTRY = join(ROOT, 'main', 'cli', 'main.ts');
const cli = (...args: string[]) =>
  spawnSync(process.execPath, ['--import', 'tsx', ENTRY, 'simulate', ...args], {
    cwd: ROOT,
    encoding: 'utf8',
  });

test('--list prints every scenario with its description', () => {
  const r = cli('--list');
  assert.equal(r.status, 0, r.stderr);
  const rows = r.stdout.trim().split('\n');
  assert.equal(rows.length, SCENARIO_NAMES.length);
  for (const name of SCENARIO_NAMES)
    assert.ok(
      rows.some((row) => row.startsWith(`${name} `)),
      name,
    );
});

test('usage errors are one line on standard error and exit 2', () => {
  for (const [args, pattern] of [
    [
      ['--scenario', 'solar-9s'],
      /^taperline: unknown scenario "solar-9s"; valid scenarios: bench-liion-3s, /,
    ],
    [['--shape', 'xml'], /^taperline: --shape must be one of kv, csv, json/],
    [['--interval', '-2'], /^taperline: --interval must be a positive number/],
    [['--seed', 'abc'], /^taperline: --seed must be a whole number/],
    // Every numeric option is read by main/cli/options.ts: blank text is refused, not read as 0.
    [['--interval', ''], /^taperline: --interval must be a positive number of seconds \(got ""\)$/m],
    [['--speedup', '0'], /^taperline: --speedup must be a positive number \(got "0"\)$/m],
    [['--duration', '-5'], /^taperline: --duration must be a non-negative number of seconds \(got "-5"\)$/m],
    [['--out', 'a.txt', '--pty'], /^taperline: choose one of --out, --pty and --device/],
  ] as const) {
    const r = cli(...args);
    assert.equal(r.status, 2, `${args.join(' ')}: ${r.stderr}`);
    assert.match(r.stderr, pattern);
    assert.equal(r.stderr.trim().split('\n').length, 1, r.stderr);
    assert.equal(r.stdout, '');
  }
});

test('--out writes the whole scenario as the generator makes it, --profile-out its profile', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-simcli-'));
  try {
    const out = join(dir, 'nimh.csv');
    const profile = join(dir, 'nimh.json');
    const r = cli(
      '--scenario',
      'nimh-4s',
      '--shape',
      'csv',
      '--interval',
      '30',
      '--checksum',
      '--seed',
      '5',
      '--out',
      out,
      '--profile-out',
      profile,
    );
    assert.equal(r.status, 0, r.stderr);
    const expected = [
      ...simulatedLines('nimh-4s', { shape: 'csv', sampleIntervalS: 30, checksum: true, seed: 5 }),
    ];
    assert.deepEqual(readFileSync(out, 'utf8').split('\n'), [...expected, '']);
    assert.deepEqual(JSON.parse(readFileSync(profile, 'utf8')), getScenario('nimh-4s').profile);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('standard output with --duration stops at the simulated time asked for', () => {
  const r = cli('--scenario', 'damaged-cell', '--duration', '120', '--interval', '10', '--shape', 'json');
  assert.equal(r.status, 0, r.stderr);
  const samples = r.stdout
    .trim()
    .split('\n')
    .filter((l) => l.startsWith('{'))
    .map((l) => JSON.parse(l) as { t: number });
  assert.deepEqual(
    samples.map((s) => s.t),
    [10, 20, 30, 40, 50, 60, 70, 80, 90, 100, 110, 120],
  );
});

test('--pty streams over a real pty pair, answers a command, and cleans up on Ctrl-C', async (t) => {
  if (spawnSync('socat', ['-V']).error) {
    t.skip('socat is not installed here');
    return;
  }
  const child = spawn(
    process.execPath,
    ['--import', 'tsx', ENTRY, 'simulate', '--pty', '--speedup', '100', '--interval', '1'],
    {
      cwd: ROOT,
      stdio: ['ignore', 'pipe', 'pipe'],
    },
  );
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  let port: SerialPort | null = null;
  try {
    const started = Date.now();
    while (!stdout.includes('\n') && Date.now() - started < 15000)
      await new Promise((r) => setTimeout(r, 20));
    const path = stdout.split('\n')[0];
    assert.ok(path && existsSync(path), `the printed pty path exists (${path}; ${stderr})`);
    let received = '';
    port = await new Promise<SerialPort>((resolve, reject) => {
      const p = new SerialPort({ path, baudRate: 115200 }, (err) => (err ? reject(err) : resolve(p)));
    });
    port.on('data', (d: Buffer) => (received += d.toString()));
    const until = async (cond: () => boolean, what: string): Promise<void> => {
      const t0 = Date.now();
      while (!cond()) {
        if (Date.now() - t0 > 15000)
          throw new Error(`timed out waiting for ${what}; got ${received.slice(-300)}`);
        await new Promise((r) => setTimeout(r, 20));
      }
    };
    await until(() => (received.match(/^t=\d+ vbat=/gm) ?? []).length >= 5, 'telemetry lines');
    port.write('status?\n');
    await until(() => /^# status stage \w+ at \d+ s/m.test(received), 'the status reply');
    await new Promise<void>((resolve) => port!.close(() => resolve()));
    port = null;
    child.kill('SIGINT');
    assert.equal(await exited, 0, stderr);
    assert.ok(!existsSync(dirname(path)), 'the pty links and their folder are removed');
  } finally {
    if (port?.isOpen) await new Promise<void>((resolve) => port!.close(() => resolve()));
    if (child.exitCode === null) child.kill('SIGKILL');
  }
});

test('--realtime paces standard output on the compressed clock and ends with the scenario', () => {
  const r = cli(
    '--scenario',
    'overheating',
    '--realtime',
    '--speedup',
    '2000',
    '--duration',
    '60',
    '--interval',
    '5',
  );
  assert.equal(r.status, 0, r.stderr);
  const expected = [...simulatedLines('overheating', { shape: 'kv', sampleIntervalS: 5, durationS: 60 })];
  assert.deepEqual(r.stdout.trim().split('\n'), expected);
});

test('--device streams to one end of a pty pair the caller made', async (t) => {
  if (spawnSync('socat', ['-V']).error) {
    t.skip('socat is not installed here');
    return;
  }
  const dir = mkdtempSync(join(tmpdir(), 'taperline-simdev-'));
  const deviceEnd = join(dir, 'device');
  const hostEnd = join(dir, 'host');
  const socat = spawn('socat', [`pty,raw,echo=0,link=${deviceEnd}`, `pty,raw,echo=0,link=${hostEnd}`], {
    stdio: 'ignore',
  });
  const socatGone = new Promise<void>((resolve) => socat.once('exit', () => resolve()));
  let port: SerialPort | null = null;
  let child: ReturnType<typeof spawn> | null = null;
  try {
    for (let i = 0; i < 500 && !(existsSync(deviceEnd) && existsSync(hostEnd)); i++)
      await new Promise((r) => setTimeout(r, 10));
    let received = '';
    port = await new Promise<SerialPort>((resolve, reject) => {
      const p = new SerialPort({ path: hostEnd, baudRate: 115200 }, (err) =>
        err ? reject(err) : resolve(p),
      );
    });
    port.on('data', (d: Buffer) => (received += d.toString()));
    child = spawn(
      process.execPath,
      [
        '--import',
        'tsx',
        ENTRY,
        'simulate',
        '--scenario',
        'damaged-cell',
        '--device',
        deviceEnd,
        '--speedup',
        '3000',
        '--interval',
        '5',
        '--shape',
        'json',
      ],
      { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] },
    );
    const exited = new Promise<number | null>((resolve) => child!.once('exit', (code) => resolve(code)));
    // 50 simulated minutes at 3000x: about a second, then the scenario ends on its own.
    assert.equal(await exited, 0);
    await new Promise((r) => setTimeout(r, 200));
    const samples = received.split('\n').filter((l) => l.startsWith('{'));
    assert.equal(samples.length, (50 * 60) / 5);
    assert.ok(received.includes('# stage precondition -> fault'), 'the firmware message arrives too');
  } finally {
    if (child && child.exitCode === null) child.kill('SIGKILL');
    if (port?.isOpen) await new Promise<void>((resolve) => port!.close(() => resolve()));
    socat.kill('SIGTERM');
    await socatGone;
    rmSync(dir, { recursive: true, force: true });
  }
});
