/**
 * `taperline report` and `taperline diagnose` as a user runs them: on a telemetry file, on
 * standard input, and on a run recorded into a real SQLite file (by id, latest, or the file).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseProfile } from '@shared/chemistry/profile';
import { createPipeline } from '@shared/engine/pipeline';
import type { Diagnosis } from '@shared/engine/diagnosis';
import { getScenario, simulatedLines } from '../../main/simulator';
import { openRecorder } from '../../main/recorder';

const SECTIONS = [
  'report-title',
  'caution',
  'profile',
  'timeline',
  'metrics',
  'charts',
  'alarms',
  'gaps',
  'diagnosis',
  'report-footer',
];

const cli = (args: string[], input?: string) =>
  spawnSync(process.execPath, ['--import', 'tsx', 'main/cli/main.ts', ...args], {
    encoding: 'utf8',
    timeout: 180_000,
    input,
  });

function tempDir(t: { after(fn: () => void): void }): string {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-report-cli-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  return dir;
}

/** Records a simulated scenario into a real database through the one pipeline, as a station would. */
function recordScenario(dbPath: string, name: string): void {
  const scenario = getScenario(name);
  const parsed = parseProfile(scenario.profile);
  assert.ok(parsed.ok);
  const recorder = openRecorder(dbPath);
  const startRxS = 1_780_000_000;
  const { runId } = recorder.startRun({
    stationId: 'bench-2',
    stationLabel: 'bench 2',
    profileName: parsed.profile.name,
    chemistry: parsed.profile.chemistry,
    profileJson: scenario.profile,
    startRxS,
  });
  const pipeline = createPipeline(parsed.profile);
  let rxS = startRxS;
  for (const text of simulatedLines(name, { shape: 'kv', sampleIntervalS: 1, seed: 11 })) {
    const out = pipeline.pushLine(text, rxS, false);
    recorder.addLine(runId, { rxS, text, kind: out.result.kind });
    if (out.sample) recorder.addSample(runId, out.sample);
    for (const e of out.events) recorder.addEvent(runId, e);
    rxS += 1;
  }
  recorder.endRun(runId, rxS, 'completed', pipeline.summary());
  recorder.close();
}

function assertReport(path: string, cause: string): void {
  const html = readFileSync(path, 'utf8');
  for (const id of SECTIONS) assert.ok(html.includes(`id="${id}"`), `section ${id}`);
  assert.match(html, new RegExp(`id="cause-${cause}"`));
}

test('report and diagnose on a telemetry file and on standard input', (t) => {
  const dir = tempDir(t);
  const file = join(dir, 'loose.csv');
  const profile = join(dir, 'profile.json');
  const text =
    [...simulatedLines('loose-connection', { shape: 'csv', sampleIntervalS: 2, seed: 5 })].join('\n') + '\n';
  writeFileSync(file, text);
  writeFileSync(profile, JSON.stringify(getScenario('loose-connection').profile));
  const out = join(dir, 'report.html');
  const ok = cli(['report', file, '--profile', profile, '--out', out]);
  assert.equal(ok.status, 0, ok.stderr);
  assertReport(out, 'connection');

  const stdin = cli(['diagnose', '-', '--profile', profile, '--json'], text);
  assert.equal(stdin.status, 0, stdin.stderr);
  assert.equal((JSON.parse(stdin.stdout) as Diagnosis).causes[0].code, 'connection');

  const noOut = cli(['report', file, '--profile', profile]);
  assert.equal(noOut.status, 2, 'missing --out is a usage error');
  const missing = cli(['report', join(dir, 'nope.txt'), '--out', out]);
  assert.equal(missing.status, 2);
  assert.match(missing.stderr, /no such file/);
  const badInterval = cli(['report', file, '--profile', profile, '--out', out, '--interval', 'abc']);
  assert.equal(badInterval.status, 2);
  assert.match(
    badInterval.stderr,
    /^taperline: --interval must be a positive number of seconds \(got "abc"\)\n$/,
  );
});

test('a PDF that cannot be written is one line naming where the HTML report was kept, exit 1', (t) => {
  if (!existsSync('/usr/bin/chromium')) {
    t.skip('no /usr/bin/chromium: the PDF is never attempted');
    return;
  }
  const dir = tempDir(t);
  const file = join(dir, 'loose.csv');
  writeFileSync(
    file,
    [...simulatedLines('loose-connection', { shape: 'csv', sampleIntervalS: 2, seed: 5 })].join('\n') + '\n',
  );
  const profile = join(dir, 'profile.json');
  writeFileSync(profile, JSON.stringify(getScenario('loose-connection').profile));
  // A plain file where the PDF's folder should be: Chromium prints, the write fails (ENOTDIR).
  const blocker = join(dir, 'not-a-folder');
  writeFileSync(blocker, 'a file, not a folder');
  const html = join(dir, 'kept.html');
  const r = cli(['report', file, '--profile', profile, '--out', html, '--pdf', join(blocker, 'run.pdf')]);
  assert.equal(r.status, 1, r.stderr);
  const lines = r.stderr.trim().split('\n');
  assert.match(lines[0], /^taperline: wrote .*kept\.html \(\d+ samples, \d+ events\)$/);
  assert.equal(lines.length, 2, `one line for the failure, no stack trace: ${r.stderr}`);
  assert.match(lines[1], /^taperline: PDF not written: \S/);
  assert.ok(lines[1].endsWith(`; the HTML report was kept at ${html}`), lines[1]);
  assertReport(html, 'connection');
  assert.ok(!existsSync(join(blocker, 'run.pdf')));
});

test('diagnose and report a run recorded in a SQLite file', (t) => {
  const dir = tempDir(t);
  const db = join(dir, 'bench.sqlite');
  recordScenario(db, 'damaged-cell');

  for (const args of [
    ['diagnose', db, '--json'],
    ['diagnose', '--db', db, '--run', '1', '--json'],
    ['diagnose', '--db', db, '--run', 'latest', '--json'],
  ]) {
    const r = cli(args);
    assert.equal(r.status, 0, `${args.join(' ')}: ${r.stderr}`);
    const d = JSON.parse(r.stdout) as Diagnosis;
    assert.equal(d.causes[0].code, 'damaged-cell', args.join(' '));
  }
  const noRun = cli(['diagnose', '--db', db, '--run', '9', '--json']);
  assert.equal(noRun.status, 2);
  assert.match(noRun.stderr, /no run 9/);

  const html = join(dir, 'run.html');
  const pdf = join(dir, 'run.pdf');
  const withPdf = cli([
    'report',
    'latest',
    '--db',
    db,
    '--out',
    html,
    ...(existsSync('/usr/bin/chromium') ? ['--pdf', pdf] : []),
  ]);
  assert.equal(withPdf.status, 0, withPdf.stderr);
  assertReport(html, 'damaged-cell');
  if (existsSync('/usr/bin/chromium')) {
    const bytes = readFileSync(pdf).toString('latin1');
    assert.ok(bytes.startsWith('%PDF-'));
    assert.ok((bytes.match(/\/Type\s*\/Page(?![s\w])/g) ?? []).length >= 1, 'at least one PDF page');
  }
  const byFile = cli(['report', db, '--out', join(dir, 'file.html')]);
  assert.equal(byFile.status, 0, byFile.stderr);
  assertReport(join(dir, 'file.html'), 'damaged-cell');
});
