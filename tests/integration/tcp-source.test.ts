/**
 * `tcp://HOST:PORT` stations over real sockets on 127.0.0.1: against a plain TCP server of
 * the test's own, and behind Debian's ser2net in front of a socat pty (the way a lab puts a
 * serial port on the network). A dropped connection and its reconnect are one gap of the same
 * run in a real SQLite file; a send reaches the other end.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import { closeSync, mkdtempSync, openSync, readSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { createServer, type Server, type Socket, type AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { openRecorder } from '../../main/recorder';
import { createStationManager } from '../../main/station';
import type { StationManagerEvents } from '../../main/station/types';
import { ptyPair, until } from './serial-pty';

// Invented demo scenario: a trail camera's 2S Li-ion pack.
const PROFILE = {
  name: 'trail camera 2S',
  chemistry: 'li-ion',
  cells: 2,
  capacityAh: 2.5,
  chargeCurrentA: 1.0,
};
const ccLine = (t: number) =>
  `t=${t} vbat=${(7.4 + t * 0.001).toFixed(3)} ibat=1.000 temp=25.0 vin=12.0 iin=0.7 chg=1 flt=0`;

function collect<K extends keyof StationManagerEvents>(
  m: ReturnType<typeof createStationManager>,
  name: K,
): StationManagerEvents[K][0][] {
  const out: StationManagerEvents[K][0][] = [];
  (m.on as (n: K, l: (x: StationManagerEvents[K][0]) => void) => void)(name, (x) => out.push(x));
  return out;
}

async function freePort(): Promise<number> {
  const s = createServer();
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', () => r()));
  const port = (s.address() as AddressInfo).port;
  await new Promise<void>((r) => s.close(() => r()));
  return port;
}

function gapRows(dbPath: string) {
  const db = new Database(dbPath, { readonly: true });
  try {
    return {
      runs: db.prepare('SELECT id, lines FROM runs').all() as { id: number; lines: number }[],
      gaps: db.prepare("SELECT t, end_t FROM events WHERE type = 'gap'").all() as {
        t: number;
        end_t: number;
      }[],
    };
  } finally {
    db.close();
  }
}

test('a TCP station reads lines, sends to the socket, and a dropped connection is one gap of the same run', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-tcp-'));
  const dbPath = join(dir, 'runs.sqlite');
  const clients: Socket[] = [];
  const received: string[] = [];
  const server: Server = createServer((socket) => {
    clients.push(socket);
    socket.on('data', (d) => received.push(d.toString('utf8')));
    socket.on('error', () => undefined);
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  const port = (server.address() as AddressInfo).port;
  const recorder = openRecorder(dbPath);
  const manager = createStationManager({ recorder });
  const lines = collect(manager, 'line');
  const sources = collect(manager, 'source');
  try {
    const snap = await manager.addStation({
      id: 'wifi-1',
      source: { kind: 'tcp', host: '127.0.0.1', port },
      profile: PROFILE,
    });
    assert.equal(snap.sourceLabel, `tcp://127.0.0.1:${port}`);
    await until(
      () => clients.length === 1 && sources.some((s) => s.status.state === 'open'),
      5000,
      'connected',
    );
    // Split across writes mid-line: the shared framer joins them.
    clients[0]!.write(`${ccLine(0)}\n${ccLine(1)}\r\n${ccLine(2).slice(0, 20)}`);
    clients[0]!.write(`${ccLine(2).slice(20)}\n`);
    await until(() => lines.filter((l) => l.line.kind === 'sample').length === 3, 5000, 'three samples');
    await manager.send('wifi-1', 'status?', '\n');
    await until(() => received.join('').includes('status?\n'), 5000, 'the sent line');
    assert.ok(lines.some((l) => l.line.kind === 'sent' && l.line.text === 'status?'));

    clients[0]!.destroy(); // the board drops off the Wi-Fi
    await until(() => sources.some((s) => s.status.state === 'lost'), 5000, 'lost');
    await until(
      () => clients.length === 2 && sources.filter((s) => s.status.state === 'open').length === 2,
      5000,
      'reconnected',
    );
    for (let t = 10; t < 13; t++) clients[1]!.write(`${ccLine(t)}\n`);
    await until(
      () => lines.filter((l) => l.line.kind === 'sample').length === 6,
      5000,
      'lines after the reconnect',
    );
    assert.equal(manager.get('wifi-1')?.runId, snap.runId, 'the same run continues');
    await manager.close();
    recorder.close();
    const { runs, gaps } = gapRows(dbPath);
    assert.equal(runs.length, 1);
    assert.equal(gaps.length, 1, 'one gap for one drop');
    assert.ok(gaps[0]!.end_t >= gaps[0]!.t);
  } finally {
    await manager.close();
    for (const c of clients) c.destroy();
    await new Promise<void>((r) => server.close(() => r()));
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a TCP station with nothing listening keeps retrying, then connects when the server starts', async () => {
  const port = await freePort();
  const manager = createStationManager({ recorder: null });
  const sources = collect(manager, 'source');
  const problems = collect(manager, 'problem');
  const clients: Socket[] = [];
  const server = createServer((s) => clients.push(s));
  try {
    await manager.addStation({
      id: 'late',
      source: { kind: 'tcp', host: '127.0.0.1', port },
      profile: PROFILE,
    });
    await until(
      () => problems.some((p) => /cannot connect to tcp:\/\/127\.0\.0\.1/.test(p.message)),
      5000,
      'a problem',
    );
    assert.ok(!sources.some((s) => s.status.state === 'lost'), 'never connected is not a gap');
    await new Promise<void>((r) => server.listen(port, '127.0.0.1', () => r()));
    await until(
      () => sources.some((s) => s.status.state === 'open'),
      10_000,
      'connected once the server is up',
    );
    assert.equal(problems.filter((p) => /cannot connect/.test(p.message)).length, 1, 'said once');
  } finally {
    await manager.close();
    for (const c of clients) c.destroy();
    await new Promise<void>((r) => server.close(() => r()));
  }
});

function startSer2net(configPath: string, dir: string): ChildProcess {
  return spawn('/usr/sbin/ser2net', ['-n', '-d', '-c', configPath, '-P', join(dir, 'ser2net.pid')], {
    stdio: 'ignore',
  });
}

test('behind ser2net in front of a socat pty: lines, a send, and a ser2net restart as one gap', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-ser2net-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  const port = await freePort();
  const configPath = join(dir, 'ser2net.yaml');
  // ser2net 4 YAML (ser2net.yaml(5)): accept TCP on loopback, connect to the pty, raw bytes.
  writeFileSync(
    configPath,
    [
      'connection: &bench',
      `  accepter: tcp,127.0.0.1,${port}`,
      `  connector: serialdev,${pair.host},115200n81,local`,
      '  options:',
      '    kickolduser: true',
      '',
    ].join('\n'),
  );
  const dbPath = join(dir, 'runs.sqlite');
  const recorder = openRecorder(dbPath);
  const manager = createStationManager({ recorder });
  const lines = collect(manager, 'line');
  const sources = collect(manager, 'source');
  let ser2net: ChildProcess | null = null;
  t.after(async () => {
    await manager.close();
    ser2net?.kill('SIGKILL');
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  });
  await pair.start();
  ser2net = startSer2net(configPath, dir);
  const device = openSync(pair.device, 'r+');
  const snap = await manager.addStation({
    id: 'rack-pi-1',
    source: { kind: 'tcp', host: '127.0.0.1', port },
    profile: PROFILE,
  });
  await until(() => sources.some((s) => s.status.state === 'open'), 10_000, 'connected through ser2net');
  // ser2net opens the pty when the client connects; lines written before may be lost, so retry.
  await until(
    () => {
      writeSync(device, `${ccLine(lines.length)}\n`);
      return lines.filter((l) => l.line.kind === 'sample').length >= 3;
    },
    10_000,
    'lines through ser2net',
  );
  await manager.send('rack-pi-1', 'version?', '\n');
  const buf = Buffer.alloc(256);
  let got = '';
  await until(
    () => {
      try {
        const n = readSync(device, buf, 0, buf.length, null);
        got += buf.subarray(0, n).toString('utf8');
      } catch {
        // EAGAIN: nothing yet
      }
      return got.includes('version?');
    },
    5000,
    'the sent line at the pty',
  );

  const before = lines.length;
  ser2net.kill('SIGKILL');
  await until(() => sources.some((s) => s.status.state === 'lost'), 10_000, 'lost when ser2net goes');
  ser2net = startSer2net(configPath, dir);
  await until(
    () => sources.filter((s) => s.status.state === 'open').length === 2,
    15_000,
    'back through ser2net',
  );
  await until(
    () => {
      writeSync(device, `${ccLine(100 + lines.length)}\n`);
      return lines.length >= before + 3;
    },
    10_000,
    'lines after the restart',
  );
  closeSync(device);
  assert.equal(manager.get('rack-pi-1')?.runId, snap.runId);
  await manager.close();
  recorder.close();
  const { runs, gaps } = gapRows(dbPath);
  assert.equal(runs.length, 1);
  assert.equal(gaps.length, 1, 'one gap for the ser2net restart');
});
