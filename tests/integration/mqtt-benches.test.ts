/**
 * Many benches through a real Mosquitto broker: two `taperline record` processes publish
 * three simulated stations each (--publish, --bench), one `taperline serve --subscribe`
 * shows all six as stations of their own with phases and alarms, and records them. The
 * broker is stopped and started again mid-run: the benches keep recording locally, every
 * sample published with QoS 1 reaches the central recording once the broker is back, and the
 * central runs mark the outage as a gap.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import type { StationSnapshot } from '@shared/ipc/payloads';
import { ApiClient } from './server-harness';
import { createBroker } from './mosquitto';
import { until } from './serial-pty';

const BIN = join(__dirname, '..', '..', 'bin', 'taperline.cjs');

function run(args: string[]): { proc: ChildProcess; out: () => string; exited: Promise<number | null> } {
  const proc = spawn(process.execPath, [BIN, ...args], { stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '';
  proc.stdout!.on('data', (d) => (out += d));
  proc.stderr!.on('data', (d) => (out += d));
  const exited = new Promise<number | null>((r) => proc.once('exit', (code) => r(code)));
  return { proc, out: () => out, exited };
}

/** Samples each station of a bench database recorded, by station id. */
function benchSamples(dbPath: string): Map<string, number> {
  const db = new Database(dbPath, { readonly: true });
  try {
    const rows = db
      .prepare(
        'SELECT r.station_id AS id, count(s.run_id) AS n FROM runs r LEFT JOIN samples s ON s.run_id = r.id GROUP BY r.station_id',
      )
      .all() as { id: string; n: number }[];
    return new Map(rows.map((r) => [r.id, r.n]));
  } finally {
    db.close();
  }
}

test('two benches publish, one serve shows and records all their stations, and a broker restart loses nothing', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-benches-'));
  const broker = await createBroker();
  const procs: ChildProcess[] = [];
  let client: ApiClient | null = null;
  t.after(async () => {
    await client?.close();
    for (const p of procs) if (p.exitCode === null) p.kill('SIGKILL');
    await broker.dispose();
    rmSync(dir, { recursive: true, force: true });
  });
  await broker.start();
  const url = broker.url('lab/burn-in');
  const central = run(['serve', '--port', '0', '--db', join(dir, 'central.sqlite'), '--subscribe', url]);
  procs.push(central.proc);
  await until(() => /serving at (http:\S+)/.test(central.out()), 20_000, 'serve to start');
  const httpUrl = /serving at (http:\S+)/.exec(central.out())![1]!;
  client = await ApiClient.connect(`${httpUrl.replace(/^http/, 'ws').replace(/\/$/, '')}/api/ws`);

  // 10 samples a second per station (1 s simulated interval at 10x).
  const bench = (name: string, scenarios: string[]) =>
    run([
      'record',
      ...scenarios.flatMap((s) => ['--simulate', s]),
      '--speedup',
      '10',
      '--db',
      join(dir, `${name}.sqlite`),
      '--publish',
      url,
      '--bench',
      name,
      '--status-every',
      '1',
    ]);
  const benchA = bench('bench-a', ['bench-liion-3s', 'weak-panel', 'overheating']);
  const benchB = bench('bench-b', ['bench-liion-3s', 'loose-connection', 'weak-panel']);
  procs.push(benchA.proc, benchB.proc);

  const list = async (): Promise<StationSnapshot[]> => {
    const reply = await client!.request('stations.list');
    assert.ok(reply.ok, JSON.stringify(reply));
    return (reply as { result: StationSnapshot[] }).result;
  };
  let stations: StationSnapshot[] = [];
  const expectedIds = [
    'bench-a/sim-bench-liion-3s',
    'bench-a/sim-weak-panel',
    'bench-a/sim-overheating',
    'bench-b/sim-bench-liion-3s',
    'bench-b/sim-loose-connection',
    'bench-b/sim-weak-panel',
  ];
  const poll = async (cond: (s: StationSnapshot[]) => boolean, ms: number, what: string) => {
    const end = Date.now() + ms;
    for (;;) {
      stations = await list();
      if (cond(stations)) return;
      if (Date.now() > end)
        throw new Error(
          `timed out waiting for ${what}: ${JSON.stringify(stations.map((s) => [s.id, s.source.state, s.state.phase, s.lines]))}\n${central.out()}`,
        );
      await new Promise((r) => setTimeout(r, 200));
    }
  };
  await poll(
    (s) => expectedIds.every((id) => s.some((x) => x.id === id && x.source.state === 'open' && x.lines > 20)),
    30_000,
    'all six remote stations open',
  );
  const byId = (id: string) => stations.find((s) => s.id === id)!;
  // Phases and alarms found here by the same engine: the demo scenarios' own outcomes.
  await poll(
    (s) =>
      s
        .find((x) => x.id === 'bench-a/sim-weak-panel')
        ?.state.activeAlarms.some((a) => a.code === 'input-low') === true &&
      s.find((x) => x.id === 'bench-b/sim-bench-liion-3s')?.state.phase === 'cc',
    20_000,
    'phases and alarms of remote stations',
  );
  assert.equal(byId('bench-a/sim-overheating').state.phase, 'cc');
  assert.match(byId('bench-a/sim-weak-panel').label, /^bench-a\//);
  assert.ok(byId('bench-a/sim-weak-panel').runId !== null, 'recorded like a local station');

  // The broker goes away: the central view marks every remote station lost; the benches go on.
  await broker.stop();
  await poll(
    (s) => expectedIds.every((id) => s.find((x) => x.id === id)?.source.state === 'lost'),
    15_000,
    'lost',
  );
  await new Promise((r) => setTimeout(r, 2000));
  await broker.start();
  await poll(
    (s) => expectedIds.every((id) => s.find((x) => x.id === id)?.source.state === 'open'),
    20_000,
    'open again',
  );
  await new Promise((r) => setTimeout(r, 1500));

  benchA.proc.kill('SIGINT');
  benchB.proc.kill('SIGINT');
  assert.equal(await benchA.exited, 0, benchA.out());
  assert.equal(await benchB.exited, 0, benchB.out());
  assert.match(benchA.out(), /Publishing as bench "bench-a"/);
  const published = /Published (\d+) of (\d+) messages/.exec(benchA.out());
  assert.ok(published, benchA.out());
  assert.equal(published[1], published[2], 'every message acknowledged by the broker');
  assert.match(benchA.out(), /broker .* is not reachable/, 'the bench said the broker was away');

  // Nothing lost: the central station has every sample its bench recorded.
  const local = new Map<string, number>([
    ...[...benchSamples(join(dir, 'bench-a.sqlite'))].map(([id, n]) => [`bench-a/${id}`, n] as const),
    ...[...benchSamples(join(dir, 'bench-b.sqlite'))].map(([id, n]) => [`bench-b/${id}`, n] as const),
  ]);
  assert.equal(local.size, 6);
  await poll(
    (s) => expectedIds.every((id) => s.find((x) => x.id === id)?.lines === local.get(id)),
    20_000,
    `central line counts equal to the benches' sample counts ${JSON.stringify([...local])}`,
  );

  central.proc.kill('SIGINT');
  assert.equal(await central.exited, 0, central.out());
  const db = new Database(join(dir, 'central.sqlite'), { readonly: true });
  try {
    const runs = db.prepare('SELECT id, station_id AS stationId FROM runs ORDER BY station_id').all() as {
      id: number;
      stationId: string;
    }[];
    assert.deepEqual(
      runs.map((r) => r.stationId),
      [...expectedIds].sort(),
    );
    for (const r of runs) {
      const gaps = db
        .prepare("SELECT count(*) AS n FROM events WHERE run_id = ? AND type = 'gap'")
        .get(r.id) as {
        n: number;
      };
      assert.ok(gaps.n >= 1, `${r.stationId}: the broker outage is a gap of its run`);
      const samples = db.prepare('SELECT count(*) AS n FROM samples WHERE run_id = ?').get(r.id) as {
        n: number;
      };
      assert.equal(samples.n, local.get(r.stationId), `${r.stationId}: every sample recorded centrally`);
    }
  } finally {
    db.close();
  }
});
