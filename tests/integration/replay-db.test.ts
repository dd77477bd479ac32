/**
 * A run recorded live (the simulated charger as a station, into a real SQLite file) replays
 * from the database exactly as the same lines replay from a file (docs/cli.md:
 * `replay` and `diagnose` take a recording database with --run ID|latest).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openRecorder } from '../../main/recorder';
import { getScenario, simulatedLines } from '../../main/simulator';
import { createStationManager } from '../../main/station';
import { until } from './serial-pty';

const ROOT = join(__dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'taperline.cjs');
const SCENARIO = 'damaged-cell';
const INTERVAL_S = 5;

const taperline = (args: string[]) =>
  spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: 'utf8', maxBuffer: 64 << 20 });

const eventsOnly = (stdout: string) =>
  stdout
    .trim()
    .split('\n')
    .map((line) => JSON.parse(line) as { type: string })
    .filter((e) => e.type !== 'summary');

test('replay and diagnose read a recorded run back as if from the file', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-replaydb-'));
  const dbPath = join(dir, 'runs.sqlite');
  try {
    const recorder = openRecorder(dbPath);
    const manager = createStationManager({ recorder });
    const { profile } = getScenario(SCENARIO);
    const snap = await manager.addStation({
      id: 'bench-2',
      label: 'garden sensor, damaged pack',
      source: { kind: 'simulator', scenario: SCENARIO, speedup: 100_000, sampleIntervalS: INTERVAL_S },
      profile,
    });
    await until(() => manager.get('bench-2')?.source.state === 'closed', 60_000, 'the scenario to end');
    await manager.close();
    recorder.close();

    const log = join(dir, 'same-lines.log');
    const profilePath = join(dir, 'profile.json');
    writeFileSync(
      log,
      [...simulatedLines(SCENARIO, { shape: 'kv', sampleIntervalS: INTERVAL_S })].join('\n') + '\n',
    );
    writeFileSync(profilePath, JSON.stringify(profile));

    const fromFile = taperline(['replay', log, '--profile', profilePath, '--events']);
    assert.equal(fromFile.status, 0, fromFile.stderr);
    const byLatest = taperline(['replay', dbPath, '--run', 'latest', '--events']);
    assert.equal(byLatest.status, 0, byLatest.stderr);
    const byId = taperline(['replay', '--db', dbPath, '--run', String(snap.runId), '--events']);
    assert.equal(byId.status, 0, byId.stderr);

    // Device time is on every line, so events agree to the second whatever the port timing was.
    assert.deepEqual(eventsOnly(byLatest.stdout), eventsOnly(fromFile.stdout));
    assert.equal(byId.stdout, byLatest.stdout);
    assert.ok(
      eventsOnly(fromFile.stdout).some((e) => (e as { code?: string }).code === 'precondition-timeout'),
    );

    const diagnoseDb = taperline(['diagnose', dbPath, '--run', 'latest', '--json']);
    const diagnoseFile = taperline(['diagnose', log, '--profile', profilePath, '--json']);
    assert.equal(diagnoseDb.status, 0, diagnoseDb.stderr);
    assert.deepEqual(JSON.parse(diagnoseDb.stdout), JSON.parse(diagnoseFile.stdout));
    assert.equal(JSON.parse(diagnoseDb.stdout).causes[0].code, 'damaged-cell');

    const noRun = taperline(['replay', dbPath, '--run', '999', '--events']);
    assert.equal(noRun.status, 2);
    assert.match(noRun.stderr, /has no run 999/);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
