/**
 * A burn-in rack from one command: `serve --rack rack.json` plus several `--simulate` and
 * `--station-port` options, and the saved rack beside the database that brings the same
 * stations back, with the same ids and profiles, after a restart.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type AddressInfo, type Socket } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { StationSnapshot } from '@shared/ipc/payloads';
import { rackFileSchema } from '@shared/sources/rack';
import { ApiClient } from './server-harness';
import { until } from './serial-pty';

const BIN = join(__dirname, '..', '..', 'bin', 'taperline.cjs');

// Invented demo profiles: a boat house battery and a garden sensor pack.
const BOAT_HOUSE = { name: 'boat house 6-cell lead-acid', chemistry: 'lead-acid', cells: 6, capacityAh: 100 };
const GARDEN = {
  name: 'garden sensor 3S',
  chemistry: 'li-ion',
  cells: 3,
  capacityAh: 2.5,
  chargeCurrentA: 1,
};

function serve(args: string[]) {
  const proc = spawn(process.execPath, [BIN, 'serve', '--port', '0', ...args], {
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  proc.stdout!.on('data', (d) => (out += d));
  proc.stderr!.on('data', (d) => (out += d));
  const exited = new Promise<number | null>((r) => proc.once('exit', (c) => r(c)));
  return { proc, out: () => out, exited };
}

async function stations(url: string): Promise<{ client: ApiClient; list: StationSnapshot[] }> {
  const client = await ApiClient.connect(`${url.replace(/^http/, 'ws').replace(/\/$/, '')}/api/ws`);
  const reply = await client.request('stations.list');
  assert.ok(reply.ok, JSON.stringify(reply));
  return { client, list: (reply as { result: StationSnapshot[] }).result };
}

test('serve starts a rack from a rack file and repeated options, saves it, and brings it back after a restart', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-rack-'));
  const sockets: Socket[] = [];
  const board = createServer((s) => sockets.push(s));
  await new Promise<void>((r) => board.listen(0, '127.0.0.1', () => r()));
  const boardPort = (board.address() as AddressInfo).port;
  t.after(async () => {
    for (const s of sockets) s.destroy();
    await new Promise<void>((r) => board.close(() => r()));
    rmSync(dir, { recursive: true, force: true });
  });
  writeFileSync(join(dir, 'garden.json'), JSON.stringify(GARDEN));
  const rackPath = join(dir, 'rack.json');
  writeFileSync(
    rackPath,
    JSON.stringify({
      stations: [
        { id: 'slot-1', label: 'Wi-Fi board', port: `tcp://127.0.0.1:${boardPort}`, profile: 'garden.json' },
        { id: 'slot-2', simulate: 'lead-acid-float', speedup: 30, profile: BOAT_HOUSE },
      ],
    }),
  );
  const db = join(dir, 'runs.sqlite');
  const first = serve([
    '--db',
    db,
    '--rack',
    rackPath,
    '--simulate',
    'bench-liion-3s',
    '--simulate',
    'weak-panel',
    '--simulate',
    'weak-panel',
  ]);
  await until(() => /serving at (http:\S+)/.test(first.out()), 20_000, 'serve');
  assert.match(first.out(), /\(5 stations,/);
  const url1 = /serving at (http:\S+)/.exec(first.out())![1]!;
  const { client: c1, list } = await stations(url1);
  assert.deepEqual(
    list.map((s) => s.id).sort(),
    ['sim-bench-liion-3s', 'sim-weak-panel', 'sim-weak-panel-2', 'slot-1', 'slot-2'],
    'a second --simulate is a station of its own',
  );
  const slot1 = list.find((s) => s.id === 'slot-1')!;
  assert.equal(slot1.label, 'Wi-Fi board');
  assert.equal(slot1.sourceLabel, `tcp://127.0.0.1:${boardPort}`);
  assert.equal(slot1.profile.name, GARDEN.name);
  assert.equal(list.find((s) => s.id === 'slot-2')!.profile.chemistry, 'lead-acid');
  await until(() => sockets.length === 1, 10_000, 'the rack connected to the Wi-Fi board');
  // A profile changed in the app is what comes back.
  const changed = { ...GARDEN, name: 'garden sensor 3S (re-rated)', capacityAh: 2.2 };
  const set = await c1.request('stations.setProfile', { stationId: 'slot-1', profile: changed });
  assert.ok(set.ok, JSON.stringify(set));
  const removed = await c1.request('stations.remove', { stationId: 'sim-weak-panel-2' });
  assert.ok(removed.ok, JSON.stringify(removed));
  await c1.close();
  first.proc.kill('SIGINT');
  assert.equal(await first.exited, 0, first.out());

  const saved = join(dir, 'runs.rack.json');
  assert.ok(existsSync(saved), 'the rack is saved next to the database');
  const savedRack = rackFileSchema.parse(JSON.parse(readFileSync(saved, 'utf8')));
  assert.equal(savedRack.stations.length, 4, 'in the rack file format');

  // Restart with no station options at all: the same stations come back.
  const second = serve(['--db', db]);
  await until(() => /serving at (http:\S+)/.test(second.out()), 20_000, 'serve again');
  const { client: c2, list: back } = await stations(/serving at (http:\S+)/.exec(second.out())![1]!);
  t.after(async () => {
    await c2.close();
    if (second.proc.exitCode === null) second.proc.kill('SIGKILL');
  });
  assert.deepEqual(back.map((s) => s.id).sort(), [
    'sim-bench-liion-3s',
    'sim-weak-panel',
    'slot-1',
    'slot-2',
  ]);
  const slot1Back = back.find((s) => s.id === 'slot-1')!;
  assert.equal(slot1Back.profile.name, changed.name);
  assert.equal(slot1Back.profile.capacityAh, 2.2);
  assert.equal(slot1Back.label, 'Wi-Fi board');
  assert.equal(back.find((s) => s.id === 'slot-2')!.profile.name, BOAT_HOUSE.name);
  await until(() => sockets.length === 2, 10_000, 'the Wi-Fi board connected again');
  second.proc.kill('SIGINT');
  assert.equal(await second.exited, 0, second.out());

  // --fresh ignores it.
  const third = serve(['--db', db, '--fresh', '--simulate', 'nimh-4s']);
  await until(() => /serving at (http:\S+)/.test(third.out()), 20_000, 'serve --fresh');
  assert.match(third.out(), /\(1 station,/);
  third.proc.kill('SIGINT');
  assert.equal(await third.exited, 0, third.out());
});

test('a bad rack file is refused with the file and key named, and nothing starts', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-rack-'));
  t.after(() => rmSync(dir, { recursive: true, force: true }));
  const rackPath = join(dir, 'rack.json');
  writeFileSync(
    rackPath,
    JSON.stringify({ stations: [{ id: 'a', port: '/dev/ttyUSB0', simulate: 'nimh-4s' }] }),
  );
  const bad = serve(['--no-record', '--rack', rackPath]);
  assert.equal(await bad.exited, 2);
  assert.match(
    bad.out(),
    /rack file .*rack\.json refused \(nothing was started\): stations\.0: give either "port"/,
  );
  writeFileSync(rackPath, JSON.stringify({ stations: [{ port: 'tcp://nowhere' }] }));
  const badTcp = serve(['--no-record', '--rack', rackPath]);
  assert.equal(await badTcp.exited, 2);
  assert.match(badTcp.out(), /station 1: "tcp:\/\/nowhere" is not a TCP address: write tcp:\/\/HOST:PORT/);
});
