/**
 * Each simulated fault scenario, read through the one pipeline, puts its true physical cause
 * first; the clean bench charge reports no cause above 0.3. The scenarios are the simulator's
 * invented demo hardware; the CLI is run on a written telemetry file as a user would.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseProfile } from '@shared/chemistry/profile';
import { diagnose, type Diagnosis } from '@shared/engine/diagnosis';
import { getScenario, simulatedLines } from '../../main/simulator';
import { RunCollector } from '../../main/report/collect-run';

const SEED = 7;

function diagnoseScenario(name: string, shape: 'kv' | 'csv' | 'json' = 'kv'): Diagnosis {
  const parsed = parseProfile(getScenario(name).profile);
  assert.ok(parsed.ok, `scenario ${name} has a valid profile`);
  const collector = new RunCollector(parsed.profile);
  let rxS = 0;
  for (const line of simulatedLines(name, { shape, sampleIntervalS: 1, seed: SEED }))
    collector.push(line, rxS++, false);
  const run = collector.finish();
  assert.ok(run.samples.length > 100, `${name} produced samples`);
  return diagnose({ profile: run.profile, samples: run.samples, events: run.events });
}

function assertFirst(d: Diagnosis, code: string): void {
  const ranking = JSON.stringify(d.causes.map((c) => [c.code, c.confidence]));
  assert.equal(d.causes[0]?.code, code, `expected ${code} first: ${ranking}`);
  assert.ok(
    d.causes[0].confidence > (d.causes[1]?.confidence ?? 0),
    `${code} beats the runner-up: ${ranking}`,
  );
  assert.ok(d.causes[0].evidence.length > 0 && d.causes[0].next.length > 0);
}

test('damaged-cell scenario: damaged-cell first', () => {
  const d = diagnoseScenario('damaged-cell');
  assertFirst(d, 'damaged-cell');
  assert.match(d.causes[0].evidence.join(' '), /below the 9\.00 V precondition threshold/);
});

test('overheating scenario: overtemperature first, diagnosed when the pack passed 45 °C', () => {
  const d = diagnoseScenario('overheating');
  assertFirst(d, 'overtemperature');
  assert.match(d.causes[0].evidence[0], /above the 45\.0 °C top of the charge window/);
});

test('weak-panel-timer scenario: weak-source first, timer-expired second', () => {
  // The panel is undersized: that is the physical cause. The timer only ended a charge the
  // panel could never finish in 4 h, so timer-expired is the proximate cause and ranks second.
  const d = diagnoseScenario('weak-panel-timer');
  assertFirst(d, 'weak-source');
  assert.equal(d.causes[1]?.code, 'timer-expired');
});

test('open-thermistor scenario: thermistor-fault first', () => {
  const d = diagnoseScenario('open-thermistor');
  assertFirst(d, 'thermistor-fault');
  assert.match(d.causes[0].evidence.join(' '), /4095 counts/);
});

test('loose-connection scenario: connection first', () => {
  const d = diagnoseScenario('loose-connection');
  assertFirst(d, 'connection');
});

test('overvoltage-drift scenario: overvoltage first, past the 4.25 V/cell limit', () => {
  // 4.25 V/cell upper-limit charge voltage (TI E2E design note "JEITA Battery Temperature Standard").
  const d = diagnoseScenario('overvoltage-drift');
  assertFirst(d, 'overvoltage');
  assert.match(d.causes[0].evidence.join(' '), /4\.25 V\/cell upper limit/);
});

test('bench-liion-3s clean charge: no fault cause above 0.3', () => {
  const d = diagnoseScenario('bench-liion-3s');
  for (const c of d.causes) assert.ok(c.confidence <= 0.3, `${c.code} scored ${c.confidence}`);
});

test('solar-lifepo4-4s clean solar charge (clouds, dusk) that reaches done: no cause above 0.3', () => {
  const d = diagnoseScenario('solar-lifepo4-4s');
  for (const c of d.causes) assert.ok(c.confidence <= 0.3, `${c.code} scored ${c.confidence}`);
});

test('the other clean demo charges (lead-acid bulk/absorption/float, NiMH -dV) report no cause above 0.3', () => {
  for (const name of ['lead-acid-float', 'nimh-4s']) {
    const d = diagnoseScenario(name);
    for (const c of d.causes) assert.ok(c.confidence <= 0.3, `${name}: ${c.code} scored ${c.confidence}`);
  }
});

test('the same diagnosis from CSV lines as from key=value lines', () => {
  const kv = diagnoseScenario('damaged-cell', 'kv');
  const csv = diagnoseScenario('damaged-cell', 'csv');
  assert.deepEqual(
    csv.causes.map((c) => c.code),
    kv.causes.map((c) => c.code),
  );
});

test('taperline diagnose FILE --profile P --json prints one JSON object', (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-diagnose-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const file = join(dir, 'overheating.txt');
  const profile = join(dir, 'profile.json');
  writeFileSync(
    file,
    [...simulatedLines('overheating', { shape: 'kv', sampleIntervalS: 1, seed: SEED })].join('\n') + '\n',
  );
  writeFileSync(profile, JSON.stringify(getScenario('overheating').profile));
  const cli = (args: string[]) =>
    spawnSync(process.execPath, ['--import', 'tsx', 'main/cli/main.ts', ...args], {
      encoding: 'utf8',
      timeout: 120_000,
    });
  const out = cli(['diagnose', file, '--profile', profile, '--json']);
  assert.equal(out.status, 0, out.stderr);
  const lines = out.stdout.trim().split('\n');
  assert.equal(lines.length, 1, 'exactly one JSON object');
  const d = JSON.parse(lines[0]) as Diagnosis;
  assert.deepEqual(Object.keys(d).sort(), ['causes', 't']);
  assert.equal(d.causes[0].code, 'overtemperature');

  const text = cli(['diagnose', file, '--profile', profile]);
  assert.equal(text.status, 0, text.stderr);
  assert.match(text.stdout, /1\. overtemperature {2}\(confidence 0\.\d\d\)/);

  const missing = cli(['diagnose', join(dir, 'nope.txt'), '--json']);
  assert.equal(missing.status, 2);
  assert.equal(missing.stderr.trim().split('\n').length, 1, 'one line on standard error');
  assert.match(missing.stderr, /no such file/);

  writeFileSync(join(dir, 'bad.json'), JSON.stringify({ chemistry: 'li-ion', cells: 0 }));
  const bad = cli(['diagnose', file, '--profile', join(dir, 'bad.json'), '--json']);
  assert.equal(bad.status, 2);
  assert.match(bad.stderr, /cells/);

  const badAt = cli(['diagnose', file, '--profile', profile, '--at', 'soon']);
  assert.equal(badAt.status, 2);
  assert.match(badAt.stderr, /--at must be/);
});
