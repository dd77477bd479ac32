/**
 * Board checks on simulated charger boards made out of spec by a part in the model (a sense
 * resistor 20 % off, a feedback divider at 4.25 V/cell, half the timing capacitance): each
 * fails on exactly its check with the measured value within 2 % of the model's truth, a board
 * with nominal parts passes, `taperline check` exits with the contract's statuses, and a
 * 16-board burn-in batch recorded into SQLite gives the yield the parts predict.
 * Limits: regulation ±1 % and current ±10 % (single-cell linear Li-ion charger ICs'
 * datasheets), termination ±15 % and timer ±10 % (common practice), via nominalRange.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseProfile } from '@shared/chemistry/profile';
import type { CheckReport } from '@shared/engine/checks';
import { createTelemetryRun, getScenario } from '../../main/simulator';
import {
  BOARD_BUILDERS,
  batchBoards,
  truthInSpec,
  type BoardScenario,
} from '../../main/simulator/board-scenarios';
import { RunCollector } from '../../main/report/collect-run';
import { judgeRun, type JudgedRun } from '../../main/report/judge-run';
import { openRunReader } from '../../main/recorder';
import { recordBatch } from './batch-fixture';

const cli = (args: string[]) =>
  spawnSync(process.execPath, ['--import', 'tsx', 'main/cli/main.ts', ...args], {
    encoding: 'utf8',
    timeout: 300_000,
  });

function judgeBoard(board: BoardScenario, intervalS = 1): JudgedRun {
  const parsed = parseProfile(board.profile);
  assert.ok(parsed.ok);
  const collector = new RunCollector(parsed.profile);
  for (const line of createTelemetryRun(board, { shape: 'kv', sampleIntervalS: intervalS }).lines())
    collector.push(line.text, line.simS, false);
  const run = collector.finish();
  return judgeRun(run, run.identity, board.name);
}

const failing = (r: CheckReport) => r.checks.filter((c) => c.result === 'fail').map((c) => c.code);
const within2Pct = (measured: number | null, truth: number) =>
  measured !== null && Math.abs(measured - truth) / truth < 0.02;

test('a board with nominal parts passes every check', () => {
  const j = judgeBoard(BOARD_BUILDERS['board-in-spec']());
  assert.equal(j.report.verdict, 'pass', JSON.stringify(j.report.checks, null, 1));
  assert.equal(j.report.board, 'GS-0001');
  assert.equal(j.firmware, '0.3');
  assert.equal(j.report.checks.length, 7);
});

test('each part out of spec fails exactly its check, measured within 2 % of the model', () => {
  const cases: [string, string, (b: BoardScenario) => number][] = [
    ['board-sense-low', 'chargeCurrentA', (b) => b.truth.chargeCurrentA],
    ['board-sense-high', 'chargeCurrentA', (b) => b.truth.chargeCurrentA],
    ['board-divider-high', 'regulationV', (b) => b.truth.regulationV],
    ['board-timer-cap-half', 'timerMin', (b) => b.truth.timerMin],
  ];
  for (const [name, code, truthOf] of cases) {
    const board = BOARD_BUILDERS[name]();
    const j = judgeBoard(board);
    assert.deepEqual(failing(j.report), [code], `${name}: ${JSON.stringify(j.report.checks, null, 1)}`);
    assert.equal(j.report.verdict, 'fail');
    const check = j.report.checks.find((c) => c.code === code)!;
    assert.ok(
      within2Pct(check.measured, truthOf(board)),
      `${name}: ${check.measured} vs truth ${truthOf(board)}`,
    );
  }
  // The truths themselves: 1.25 A from a 20 % low sense resistor, 12.75 V = 3 x 4.25 V, 120 min.
  assert.ok(Math.abs(BOARD_BUILDERS['board-sense-low']().truth.chargeCurrentA - 1.25) < 1e-9);
  assert.ok(Math.abs(BOARD_BUILDERS['board-divider-high']().truth.regulationV - 12.75) < 1e-9);
  assert.ok(Math.abs(BOARD_BUILDERS['board-timer-cap-half']().truth.timerMin - 120) < 1e-9);
});

test('taperline check: exit 0 pass, 1 fail, 3 incomplete, 2 usage; the contract JSON', (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-check-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const write = (name: string, durationS?: number) => {
    const file = join(dir, `${name}${durationS ? '-short' : ''}.log`);
    const lines = [
      ...createTelemetryRun(getScenario(name), { shape: 'kv', sampleIntervalS: 2, durationS }).lines(),
    ];
    writeFileSync(file, lines.map((l) => l.text).join('\n') + '\n');
    return file;
  };
  const profile = join(dir, 'board.json');
  writeFileSync(profile, JSON.stringify(getScenario('board-in-spec').profile));

  const pass = cli(['check', write('board-in-spec'), '--profile', profile, '--json']);
  assert.equal(pass.status, 0, pass.stderr);
  const report = JSON.parse(pass.stdout) as CheckReport;
  assert.equal(report.verdict, 'pass');
  assert.equal(report.board, 'GS-0001');
  assert.deepEqual(Object.keys(report.checks[0]).slice(0, 7), [
    'code',
    'measured',
    'min',
    'max',
    'unit',
    'result',
    'note',
  ]);

  const fail = cli(['check', write('board-divider-high'), '--profile', profile]);
  assert.equal(fail.status, 1, fail.stderr);
  assert.match(fail.stdout, /^GS-0004: FAIL/);
  assert.match(fail.stdout, /fail\s+regulationV\s+12\.75 V/);

  const short = cli(['check', write('board-in-spec', 3600), '--profile', profile, '--json']);
  assert.equal(short.status, 3, short.stderr);
  const incomplete = JSON.parse(short.stdout) as CheckReport;
  assert.equal(incomplete.verdict, 'incomplete');
  assert.equal(incomplete.checks.find((c) => c.code === 'regulationV')?.note, 'the run never reached cv');

  const bare = join(dir, 'bare.json');
  writeFileSync(bare, JSON.stringify({ chemistry: 'li-ion', cells: 3 }));
  const noExpect = cli(['check', join(dir, 'board-in-spec.log'), '--profile', bare]);
  assert.equal(noExpect.status, 2);
  assert.match(noExpect.stderr, /has no expect key/);
  const missing = cli(['check', join(dir, 'nope.log'), '--profile', profile]);
  assert.equal(missing.status, 2);
  assert.match(missing.stderr, /no such file/);
});

test('a 16-board burn-in batch recorded into SQLite: one line per board, the yield the parts predict, verdicts stored', (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-batch-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const db = join(dir, 'burn-in.sqlite');
  // Seed 7 of the invented lot: 4 boards out of spec by their sense resistors (the model's truth).
  const boards = batchBoards(16, 7);
  const expectedPass = boards.filter((b) => truthInSpec(b.truth)).map((b) => b.board);
  assert.equal(expectedPass.length, 12);
  recordBatch(db, boards, 'B7', 2);

  const html = join(dir, 'batch.html');
  const csv = join(dir, 'batch.csv');
  const r = cli(['check', '--db', db, '--batch', 'B7', '--json', '--out', html, '--csv', csv, '--store']);
  assert.equal(r.status, 1, r.stderr);
  const out = JSON.parse(r.stdout) as {
    runs: (CheckReport & { source: string })[];
    summary: { boards: number; pass: number; fail: number; yieldPct: number };
  };
  assert.equal(out.summary.boards, 16);
  assert.deepEqual(
    out.runs.filter((x) => x.verdict === 'pass').map((x) => x.board),
    expectedPass,
  );
  assert.equal(out.summary.yieldPct, 75);
  for (const run of out.runs.filter((x) => x.verdict === 'fail'))
    assert.deepEqual(failing(run), ['chargeCurrentA']);

  const text = cli(['check', '--db', db, '--batch', 'B7']);
  assert.equal(text.status, 1);
  const lines = text.stdout.trim().split('\n');
  assert.equal(lines.length, 17);
  assert.match(lines[16], /^16 boards: 12 pass, 4 fail, 0 incomplete; yield 75 %$/);

  assert.ok(existsSync(html));
  const csvText = readFileSync(csv, 'utf8').trim().split('\n');
  assert.equal(csvText.length, 17);
  assert.match(csvText[0], /^board,verdict,chargeCurrentA \(A\),regulationV \(V\)/);

  const reader = openRunReader(db);
  t.after(() => reader.close());
  const rows = reader.listRuns();
  assert.equal(rows.length, 16);
  assert.ok(
    rows.every((row) => row.batchId === 'B7' && row.boardId?.startsWith('GS-') && row.firmware === '0.3'),
  );
  assert.equal(rows.filter((row) => row.verdict === 'pass').length, 12);

  const unknown = cli(['check', '--db', db, '--batch', 'nope']);
  assert.equal(unknown.status, 2);
  assert.match(unknown.stderr, /no runs of batch "nope"/);
});

test('the Run report puts the verdict, the board and the checks table at the top', (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-check-report-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const file = join(dir, 'divider.log');
  const board = BOARD_BUILDERS['board-divider-high']();
  const lines = [...createTelemetryRun(board, { shape: 'kv', sampleIntervalS: 2 }).lines()];
  writeFileSync(file, lines.map((l) => l.text).join('\n') + '\n');
  const profile = join(dir, 'board.json');
  writeFileSync(profile, JSON.stringify(board.profile));
  const out = join(dir, 'report.html');
  const r = cli(['report', file, '--profile', profile, '--out', out]);
  assert.equal(r.status, 0, r.stderr);
  const html = readFileSync(out, 'utf8');
  assert.ok(
    html.indexOf('id="checks"') < html.indexOf('id="profile"'),
    'the verdict comes before the profile',
  );
  assert.match(html, /<span id="verdict" class="verdict verdict-fail">FAIL<\/span>/);
  assert.match(html, /<td>GS-0004<\/td><td>not given<\/td><td>0\.3<\/td>/);
  assert.match(html, /<td>regulationV<\/td><td>12\.75<\/td>/);
});
