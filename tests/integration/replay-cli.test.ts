/**
 * `taperline replay` through the shipped command (bin/taperline.cjs -> dist/cli.cjs, built by
 * `npm test` first): NDJSON events per docs/cli.md, standard input, pacing, exit codes,
 * and malformed lines counted without stopping the run.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { getScenario, simulatedLines } from '../../main/simulator';

const ROOT = join(__dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'taperline.cjs');
const dir = mkdtempSync(join(tmpdir(), 'taperline-replay-'));
test.after(() => rmSync(dir, { recursive: true, force: true }));

function taperline(args: string[], input?: string) {
  return spawnSync(process.execPath, [BIN, ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    input,
    maxBuffer: 64 << 20,
  });
}

function writeScenario(name: string, sampleIntervalS = 5): { log: string; profile: string } {
  const log = join(dir, `${name}.log`);
  const profile = join(dir, `${name}.json`);
  writeFileSync(log, [...simulatedLines(name, { shape: 'kv', sampleIntervalS })].join('\n') + '\n');
  writeFileSync(profile, JSON.stringify(getScenario(name).profile));
  return { log, profile };
}

type Record = { type: string; [key: string]: unknown };
const ndjson = (stdout: string): Record[] =>
  stdout
    .trim()
    .split('\n')
    .map((line) => JSON.parse(line) as Record);

test('--events prints one JSON event a line and the summary last (docs/cli.md)', () => {
  const { log, profile } = writeScenario('damaged-cell');
  const r = taperline(['replay', log, '--profile', profile, '--events']);
  assert.equal(r.status, 0, r.stderr);
  const records = ndjson(r.stdout);
  const summary = records.at(-1)!;
  assert.equal(summary.type, 'summary');
  assert.deepEqual(Object.keys(summary), [
    'type',
    'durationS',
    'ah',
    'wh',
    'phaseS',
    'lines',
    'rejected',
    'timeGlitches',
    'clockResets',
  ]);
  assert.ok(records.slice(0, -1).every((e) => ['phase', 'alarm', 'alarm-clear', 'gap'].includes(e.type)));
  const phases = records.filter((e) => e.type === 'phase').map((e) => e.phase);
  assert.equal(phases[0], 'precondition');
  assert.ok(phases.includes('fault'), `phases: ${phases.join(' ')}`);
  const timeout = records.find((e) => e.type === 'alarm' && e.code === 'precondition-timeout');
  assert.ok(timeout, 'precondition-timeout raised');
  assert.equal(timeout.level, 'critical');
  assert.equal(typeof timeout.message, 'string');
  // t is seconds since the first sample: non-decreasing through the file.
  const times = records.slice(0, -1).map((e) => e.t as number);
  assert.deepEqual(
    times,
    [...times].sort((a, b) => a - b),
  );
  assert.equal(times[0], 0);
});

test('standard input (-) gives the same events as the file', () => {
  const { log, profile } = writeScenario('bench-liion-3s', 10);
  const fromFile = taperline(['replay', log, '--profile', profile, '--events']);
  const fromStdin = taperline(['replay', '-', '--profile', profile, '--events'], readFileSync(log, 'utf8'));
  assert.equal(fromStdin.status, 0, fromStdin.stderr);
  assert.equal(fromStdin.stdout, fromFile.stdout);
  const phases = ndjson(fromFile.stdout)
    .filter((e) => e.type === 'phase')
    .map((e) => e.phase);
  assert.deepEqual(phases, ['cc', 'cv', 'done']);
});

test('--speed N paces the replay on the run clock and gives the same events', () => {
  const { log, profile } = writeScenario('nimh-4s', 30);
  const fast = taperline(['replay', log, '--profile', profile, '--events']);
  const started = Date.now();
  // The scenario lasts a few hours of run time; at 20,000x that is well under a second per hour.
  const paced = taperline(['replay', log, '--profile', profile, '--events', '--speed', '20000']);
  const elapsedS = (Date.now() - started) / 1000;
  assert.equal(paced.status, 0, paced.stderr);
  assert.equal(paced.stdout, fast.stdout);
  const durationS = ndjson(fast.stdout).at(-1)!.durationS as number;
  assert.ok(
    elapsedS >= durationS / 20000 - 0.05,
    `paced replay took ${elapsedS} s for ${durationS} s of run`,
  );
});

test('malformed lines are counted with the run going on', () => {
  const { log, profile } = writeScenario('bench-liion-3s', 10);
  const lines = readFileSync(log, 'utf8').trim().split('\n');
  const bad = [
    'vbat=banana ibat=1',
    '{"vbat": 3.9',
    'x'.repeat(5000),
    't=1 vbat=11.2*00',
    '\u0001\u0002garbage',
  ];
  const mixed = [...lines.slice(0, 100), ...bad, ...lines.slice(100)];
  const mixedLog = join(dir, 'mixed.log');
  writeFileSync(mixedLog, mixed.join('\n') + '\n');
  const r = taperline(['replay', mixedLog, '--profile', profile, '--events']);
  assert.equal(r.status, 0, r.stderr);
  const summary = ndjson(r.stdout).at(-1)!;
  assert.equal(summary.rejected, bad.length);
  assert.equal(summary.lines, mixed.length);
  const phases = ndjson(r.stdout)
    .filter((e) => e.type === 'phase')
    .map((e) => e.phase);
  assert.deepEqual(phases, ['cc', 'cv', 'done']);
});

test('a missing file exits 2 with one line on standard error', () => {
  const r = taperline(['replay', join(dir, 'nope.log'), '--events']);
  assert.equal(r.status, 2);
  assert.equal(r.stdout, '');
  assert.match(r.stderr, /^taperline: no such file: .*nope\.log\n$/);
});

test('bad numbers for --speed and --interval exit 2 naming the option and the text', () => {
  const { log } = writeScenario('bench-liion-3s', 60);
  for (const [args, want] of [
    [['--speed', 'fast'], /^taperline: --speed must be a positive number or max \(got "fast"\)\n$/],
    [['--speed', ''], /^taperline: --speed must be a positive number or max \(got ""\)\n$/],
    [['--interval', '0'], /^taperline: --interval must be a positive number of seconds \(got "0"\)\n$/],
  ] as const) {
    const r = taperline(['replay', log, ...args]);
    assert.equal(r.status, 2, args.join(' '));
    assert.equal(r.stdout, '');
    assert.match(r.stderr, want);
  }
});

test('a bad profile exits 2 naming the bad key', () => {
  const { log } = writeScenario('bench-liion-3s', 60);
  const badProfile = join(dir, 'bad.json');
  writeFileSync(badProfile, JSON.stringify({ chemistry: 'li-ion', cells: 3, tempWindowC: [45, 0] }));
  const r = taperline(['replay', log, '--profile', badProfile, '--events']);
  assert.equal(r.status, 2);
  assert.equal(r.stderr.trim().split('\n').length, 1);
  assert.match(r.stderr, /tempWindowC/);
  const notJson = join(dir, 'not-json.json');
  writeFileSync(notJson, '{ chemistry: li-ion');
  const r2 = taperline(['replay', log, '--profile', notJson]);
  assert.equal(r2.status, 2);
  assert.match(r2.stderr, /not valid JSON/);
});

test('without --profile a Li-ion pack is assumed from the first pack voltage, and said so', () => {
  const { log } = writeScenario('bench-liion-3s', 30);
  const r = taperline(['replay', log, '--events']);
  assert.equal(r.status, 0, r.stderr);
  assert.match(r.stderr, /assumed a 3-cell Li-ion pack/);
  assert.equal(ndjson(r.stdout).at(-1)!.type, 'summary');
});
