/**
 * `taperline sweep` through its shipped entry (bin/taperline.cjs): a sweep file and a recorded
 * run give the same answer in the contract's shape; a run with no sweep exits 3 with the reason;
 * usage errors exit 2. Needs `npm run build` first.
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
import { maxPowerPoint, panelPoint, saturationCurrentForVocA } from '../../main/simulator/solar';

const ROOT = join(__dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'taperline.cjs');

const taperline = (args: string[]) =>
  spawnSync(process.execPath, [BIN, ...args], { cwd: ROOT, encoding: 'utf8', maxBuffer: 64 << 20 });

test('sweep FILE --json: the contract fields, exit 0; a recorded run of the same scenario agrees', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-sweep-'));
  try {
    const { profile } = getScenario('sweep-trimmer');
    const log = join(dir, 'sweep.log');
    const profilePath = join(dir, 'profile.json');
    writeFileSync(
      log,
      [...simulatedLines('sweep-trimmer', { shape: 'kv', sampleIntervalS: 1 })].join('\n') + '\n',
    );
    writeFileSync(profilePath, JSON.stringify(profile));

    const out = taperline(['sweep', log, '--profile', profilePath, '--json']);
    assert.equal(out.status, 0, out.stderr);
    const r = JSON.parse(out.stdout) as Record<string, unknown> & { fit: { points: number; rmsW: number } };
    for (const key of ['mppV', 'mppW', 'setpointV', 'operatingV', 'lossPct', 'fit'])
      assert.ok(key in r, `contract key ${key}`);
    assert.equal(r.setpointV, 18.4);
    assert.ok(Math.abs((r.mppV as number) - 16.64) < 0.17, `mppV ${String(r.mppV)}`);
    assert.ok(Math.abs((r.mppW as number) - 16.46) < 0.17, `mppW ${String(r.mppW)}`);
    assert.ok(Math.abs((r.operatingV as number) - 18.4) < 0.05);
    assert.ok((r.lossPct as number) > 5 && (r.lossPct as number) < 20);
    assert.ok(r.fit.points > 500 && r.fit.rmsW > 0 && r.fit.rmsW < 0.2);
    assert.match(
      String(r.advice),
      /^turn the set point down about 1\.\d V: about \d+ % more power at this light$/,
    );

    const text = taperline(['sweep', log, '--profile', profilePath]);
    assert.equal(text.status, 0, text.stderr);
    assert.match(text.stdout, /Maximum power point: 16\.\d\d V, 16\.\d\d W \(single-diode fit/);
    assert.match(text.stdout, /Panel temperature: the panel was at 3\d °C/);
    assert.match(text.stdout, /Whole run: MPPT efficiency about \d+\.\d %/);

    // The same scenario recorded live into SQLite, read back with --db/--run.
    const dbPath = join(dir, 'runs.sqlite');
    const recorder = openRecorder(dbPath);
    const manager = createStationManager({ recorder });
    await manager.addStation({
      id: 'solar-1',
      label: 'boat house panel',
      source: { kind: 'simulator', scenario: 'sweep-trimmer', speedup: 100_000, sampleIntervalS: 1 },
      profile,
    });
    await until(() => manager.get('solar-1')?.source.state === 'closed', 60_000, 'the scenario to end');
    await manager.close();
    recorder.close();
    const fromDb = taperline(['sweep', '--db', dbPath, '--run', 'latest', '--json']);
    assert.equal(fromDb.status, 0, fromDb.stderr);
    const d = JSON.parse(fromDb.stdout) as { mppV: number; mppW: number; setpointV: number };
    assert.equal(d.setpointV, 18.4, 'the profile recorded with the run');
    assert.ok(Math.abs(d.mppV - (r.mppV as number)) < 0.02 && Math.abs(d.mppW - (r.mppW as number)) < 0.02);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('sweep exits 3 with the reason when the data hold no sweep, 2 for a usage error', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-sweep-'));
  try {
    const log = join(dir, 'adapter.log');
    writeFileSync(
      log,
      [...simulatedLines('bench-liion-3s', { shape: 'kv', sampleIntervalS: 10, durationS: 1200 })].join(
        '\n',
      ) + '\n',
    );
    const out = taperline(['sweep', log, '--json']);
    assert.equal(out.status, 3, out.stderr);
    assert.match(out.stderr, /no usable sweep: no sweep found/);
    const r = JSON.parse(out.stdout) as { mppV: unknown; reason: string };
    assert.equal(r.mppV, null);
    assert.match(r.reason, /no sweep found/);

    const missing = taperline(['sweep', join(dir, 'nothing.log')]);
    assert.equal(missing.status, 2);
    assert.match(missing.stderr, /nothing\.log/);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a one-way sweep in CSV without device time, current in mA: the panel truth within 1 %', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-sweep-'));
  try {
    // Invented demo panel: 36 cells, 3 A class, warm; swept once from 20 V down to 12 V.
    const base = {
      cellsInSeries: 36,
      ideality: 1.3,
      photoCurrentStcA: 3,
      seriesOhm: 0.2,
      shuntOhm: 200,
      cellTempC: 45,
    };
    const panel = { ...base, saturationCurrentA: saturationCurrentForVocA(base, 21.6) };
    const rows = ['vin,iin'];
    let seed = 7;
    const noise = (): number => ((seed = (seed * 16807) % 2147483647) / 2147483647 - 0.5) * 2;
    for (let k = 0; k < 600; k++) {
      const v = 20 - (8 * k) / 600;
      const i = panelPoint(panel, v, 800).iA;
      rows.push(`${(v + 0.01 * noise()).toFixed(2)},${Math.round(i * 1000 + 2 * noise())}mA`);
    }
    const file = join(dir, 'oneway.csv');
    writeFileSync(file, rows.join('\n') + '\n');
    const out = taperline(['sweep', file, '--json', '--interval', '0.5']);
    assert.equal(out.status, 0, out.stderr);
    const r = JSON.parse(out.stdout) as {
      mppV: number;
      mppW: number;
      fit: { model: string };
      window: { toS: number };
    };
    const truth = maxPowerPoint(panel, 800);
    assert.ok(Math.abs(r.mppV / truth.vV - 1) < 0.01, `V ${r.mppV} vs ${truth.vV}`);
    assert.ok(Math.abs(r.mppW / truth.pW - 1) < 0.01, `W ${r.mppW} vs ${truth.pW}`);
    assert.equal(r.fit.model, 'single-diode');
    assert.ok(Math.abs(r.window.toS - 299.5) < 1, 'half a second a line');
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
