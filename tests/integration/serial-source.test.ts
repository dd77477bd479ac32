/**
 * The serial LineSource with the real serialport binding on socat pty pairs, and its
 * reconnect logic with @serialport/binding-mock where a device must change its path.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdirSync, mkdtempSync, readFileSync, realpathSync, rmSync, symlinkSync, unlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DisconnectedError, type SerialPortStream } from '@serialport/stream';
import { SerialPort, SerialPortMock } from 'serialport';
import { createSerialSource } from '../../main/serial';

// @serialport/binding-mock, as serialport's own SerialPortMock uses it.
const MockBinding = SerialPortMock.binding;
import type { SourceLine, SourceStatus } from '../../main/sources/types';
import { ptyPair, until } from './serial-pty';

function collect(source: ReturnType<typeof createSerialSource>) {
  const lines: SourceLine[] = [];
  const statuses: SourceStatus[] = [];
  const problems: string[] = [];
  source.on('line', (l) => lines.push(l));
  source.on('status', (s) => statuses.push(s));
  source.on('problem', (p) => problems.push(p));
  return { lines, statuses, problems };
}

async function openDevice(path: string): Promise<SerialPort> {
  const port = new SerialPort({ path, baudRate: 115200, autoOpen: false });
  await new Promise<void>((resolve, reject) => port.open((err) => (err ? reject(err) : resolve())));
  return port;
}

function write(port: SerialPort, data: string | Buffer): Promise<void> {
  return new Promise((resolve, reject) =>
    port.write(data, (err) => (err ? reject(err) : port.drain((e) => (e ? reject(e) : resolve())))),
  );
}

function closePort(port: SerialPort): Promise<void> {
  return new Promise((resolve) => (port.isOpen ? port.close(() => resolve()) : resolve()));
}

test('lines arrive framed on a pty pair: \\r dropped, blank lines kept, sends arrive with the chosen ending', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const pair = ptyPair(join(dir, 'device'), join(dir, 'host'));
  await pair.start();
  const source = createSerialSource({ kind: 'serial', path: pair.host, baudRate: 115200 });
  const got = collect(source);
  const sent: string[] = [];
  source.on('sent', (s) => sent.push(s.text));
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    const device = await openDevice(pair.device);
    const before = Date.now() / 1000;
    // docs/telemetry.md example line, once with \r\n, then a blank line, then split across writes.
    await write(device, 't=812.5 vbat=8.214 ibat=0.598 temp=27.1\r\n\n');
    await write(device, '{"t":813.5,"vb');
    await write(device, 'at":8.215}\n');
    await until(() => got.lines.length >= 3, 5000, 'three lines');
    assert.deepEqual(
      got.lines.map((l) => [l.text, l.tooLong]),
      [
        ['t=812.5 vbat=8.214 ibat=0.598 temp=27.1', false],
        ['', false],
        ['{"t":813.5,"vbat":8.215}', false],
      ],
    );
    assert.ok(got.lines.every((l) => l.rxS >= before && l.rxS <= Date.now() / 1000 + 1));

    const received: Buffer[] = [];
    device.on('data', (d: Buffer) => received.push(d));
    for (const ending of ['\n', '\r\n', '\r', ''] as const) await source.send?.('rate 2', ending);
    await until(() => Buffer.concat(received).length >= 6 * 4 + 4, 5000, 'sent bytes');
    assert.equal(Buffer.concat(received).toString('latin1'), 'rate 2\nrate 2\r\nrate 2\rrate 2');
    assert.deepEqual(sent, ['rate 2', 'rate 2', 'rate 2', 'rate 2']);
    await closePort(device);
  } finally {
    await source.stop();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
  assert.equal(got.statuses.at(-1)?.state, 'closed');
});

test('a 10 MB burst without newline becomes one cut line of 4096 bytes, then the stream resynchronises', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const pair = ptyPair(join(dir, 'device'), join(dir, 'host'));
  await pair.start();
  const source = createSerialSource({ kind: 'serial', path: pair.host, baudRate: 115200 });
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    const device = await openDevice(pair.device);
    const rssBefore = process.memoryUsage().rss;
    let rssPeak = rssBefore;
    const sampler = setInterval(() => (rssPeak = Math.max(rssPeak, process.memoryUsage().rss)), 20);
    const burst = Buffer.alloc(10 * 1024 * 1024, 'A');
    await write(device, Buffer.concat([burst, Buffer.from('\nvbat=8.2\n')]));
    await until(() => got.lines.length >= 2, 30_000, 'the cut line and the next one');
    clearInterval(sampler);
    assert.equal(got.lines.length, 2);
    // docs/telemetry.md: lines are at most 4096 bytes; a longer run is cut and rejected as line-too-long.
    assert.equal(got.lines[0].tooLong, true);
    assert.equal(Buffer.byteLength(got.lines[0].text), 4096);
    assert.deepEqual([got.lines[1].text, got.lines[1].tooLong], ['vbat=8.2', false]);
    // Bounded memory: the 10 MB were never held at once by the reader (the writer's own buffer aside).
    assert.ok(rssPeak - rssBefore < 40 * 1024 * 1024, `rss grew by ${rssPeak - rssBefore} bytes`);
    await closePort(device);
  } finally {
    await source.stop();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a line of exactly 4096 bytes plus \\r\\n is whole; 4097 bytes is cut (the shared framer on a pty)', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const pair = ptyPair(join(dir, 'device'), join(dir, 'host'));
  await pair.start();
  const source = createSerialSource({ kind: 'serial', path: pair.host, baudRate: 115200 });
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    const device = await openDevice(pair.device);
    // docs/telemetry.md: at most 4096 bytes per line, not counting the newline and one \r before it.
    await write(device, 'B'.repeat(4096) + '\r\n' + 'C'.repeat(4097) + '\nvbat=8.2\n');
    await until(() => got.lines.length >= 3, 5000, 'three lines');
    assert.deepEqual(
      got.lines.map((l) => [l.text, l.tooLong]),
      [
        ['B'.repeat(4096), false],
        ['C'.repeat(4096), true],
        ['vbat=8.2', false],
      ],
    );
    await closePort(device);
  } finally {
    await source.stop();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a link re-pointed at another pty while the open one is silent: lost, then the new device is read', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const first = ptyPair(join(dir, 'dev0'), join(dir, 'host0'));
  const second = ptyPair(join(dir, 'dev1'), join(dir, 'host1'));
  await first.start();
  await second.start();
  const link = join(dir, 'charger');
  symlinkSync(realpathSync(first.host), link);
  const source = createSerialSource(
    { kind: 'serial', path: link, baudRate: 115200 },
    { list: async () => [] },
  );
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    // The first pair stays alive (no hang-up to notice): only the name now leads elsewhere.
    unlinkSync(link);
    symlinkSync(realpathSync(second.host), link);
    await until(() => got.statuses.filter((s) => s.state === 'open').length === 2, 5000, 'open again');
    assert.match(got.statuses.find((s) => s.state === 'lost')?.detail ?? '', /now names another device/);
    const device = await openDevice(second.device);
    await write(device, 'vbat=11.9\n');
    await until(() => got.lines.length === 1, 5000, 'a line from the new device');
    assert.equal(got.lines[0].text, 'vbat=11.9');
    await closePort(device);
  } finally {
    await source.stop();
    await first.stop();
    await second.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a killed far end is noticed by the hang-up, without spinning, and a stale pty link is not opened', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const pair = ptyPair(join(dir, 'device'), join(dir, 'host'));
  await pair.start();
  const source = createSerialSource(
    { kind: 'serial', path: pair.host, baudRate: 115200 },
    { list: async () => [] },
  );
  const got = collect(source);
  // utime + stime of this process (proc(5) fields 14 and 15, in USER_HZ = 100 ticks a second).
  const cpuS = () => {
    const stat = readFileSync('/proc/self/stat', 'utf8');
    const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(f[11]) + Number(f[12])) / 100;
  };
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    // SIGKILL: socat cannot remove its links; they dangle, and may later lead to a re-used pty number.
    await pair.unplug();
    await until(() => got.statuses.some((s) => s.state === 'lost'), 5000, 'lost');
    const c0 = cpuS();
    const w0 = Date.now();
    // Another pair takes the freed pty numbers; the dangling links were made before those ptys.
    const other = ptyPair(join(dir, 'other-dev'), join(dir, 'other-host'));
    await other.start();
    await new Promise((r) => setTimeout(r, 1000));
    const cpuPct = (100 * (cpuS() - c0)) / ((Date.now() - w0) / 1000);
    assert.equal(got.statuses.filter((s) => s.state === 'open').length, 1, 'a stale link was opened');
    // A zero-byte read loop would keep this process near 100 % of a core.
    assert.ok(cpuPct < 50, `CPU while the device was away: ${cpuPct.toFixed(1)} %`);
    await other.stop();
  } finally {
    await source.stop();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('unplug and replug on the same path: status lost once, then open, and lines flow again', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const pair = ptyPair(join(dir, 'device'), join(dir, 'host'));
  await pair.start();
  const source = createSerialSource(
    { kind: 'serial', path: pair.host, baudRate: 9600 },
    { retryMinMs: 50, retryMaxMs: 400 },
  );
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    let device = await openDevice(pair.device);
    await write(device, 'vbat=8.1\n');
    await until(() => got.lines.length === 1, 5000, 'first line');
    await closePort(device);
    await pair.unplug();
    await until(() => got.statuses.some((s) => s.state === 'lost'), 5000, 'lost');
    // Stay unplugged over several retries: still one `lost`.
    await new Promise((r) => setTimeout(r, 700));
    await pair.start();
    await until(() => got.statuses.filter((s) => s.state === 'open').length === 2, 10_000, 'open again');
    device = await openDevice(pair.device);
    await write(device, 'vbat=8.3\n');
    await until(() => got.lines.length === 2, 5000, 'line after replug');
    assert.equal(got.lines[1].text, 'vbat=8.3');
    assert.deepEqual(
      got.statuses.map((s) => s.state),
      ['connecting', 'open', 'lost', 'open'],
    );
    const lost = got.statuses[2];
    assert.ok(lost.state === 'lost' && lost.sinceRxS === got.lines[0].rxS);
    assert.match(got.statuses[3].detail, /is back after/);
    await closePort(device);
  } finally {
    await source.stop();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a port that does not exist yet is reported once and opened when it appears', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const pair = ptyPair(join(dir, 'device'), join(dir, 'host'));
  const source = createSerialSource(
    { kind: 'serial', path: pair.host, baudRate: 115200 },
    { retryMinMs: 50, retryMaxMs: 200 },
  );
  const got = collect(source);
  try {
    source.start();
    await new Promise((r) => setTimeout(r, 500));
    assert.equal(got.problems.length, 1);
    assert.match(got.problems[0], /does not exist \(yet\); waiting for the device/);
    await pair.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    await assert.rejects(
      source.stop().then(() => source.send?.('x', '\n')),
      /not open/,
    );
  } finally {
    await source.stop();
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('a device that comes back under another path is found again by vendor and product id (binding-mock)', async () => {
  MockBinding.reset();
  // Invented USB ids for a demo bridge.
  const ids = { vendorId: '1d6b', productId: '0104' };
  MockBinding.createPort('/dev/ttyMOCK0', ids);
  const opened: SerialPortStream[] = [];
  let present = new Set(['/dev/ttyMOCK0']);
  const source = createSerialSource(
    { kind: 'serial', path: '/dev/ttyMOCK0', baudRate: 115200, match: ids },
    {
      retryMinMs: 20,
      retryMaxMs: 100,
      openPort: (o) => {
        const p = new SerialPortMock({ path: o.path, baudRate: o.baudRate, autoOpen: false });
        opened.push(p);
        return p;
      },
      list: () => MockBinding.list(),
      exists: (p) => present.has(p),
    },
  );
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    (opened[0] as SerialPortMock).port?.emitData('vbat=4.10\n');
    await until(() => got.lines.length === 1, 5000, 'first line');
    // Unplug: the binding reports a disconnect, the device vanishes, then enumerates as ttyMOCK1.
    MockBinding.reset();
    present = new Set();
    opened[0]._disconnected(new DisconnectedError('device unplugged'));
    await until(() => got.statuses.some((s) => s.state === 'lost'), 5000, 'lost');
    MockBinding.createPort('/dev/ttyMOCK1', ids);
    present = new Set(['/dev/ttyMOCK1']);
    await until(() => got.statuses.filter((s) => s.state === 'open').length === 2, 5000, 'open again');
    const second = opened.at(-1) as SerialPortMock;
    assert.equal(second.path, '/dev/ttyMOCK1');
    second.port?.emitData('vbat=4.12\n');
    await until(() => got.lines.length === 2, 5000, 'line from the new path');
    assert.equal(got.lines[1].text, 'vbat=4.12');
    assert.match((got.statuses.find((s) => s.state === 'lost') as SourceStatus).detail, /unplugged/);
  } finally {
    await source.stop();
    MockBinding.reset();
  }
});

test('a device that comes back under another path is found again by its /dev/serial/by-id name (real ptys)', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-serial-'));
  const byId = join(dir, 'by-id');
  mkdirSync(byId);
  // Invented stable name; the kernel path changes from ttyACM0 to ttyACM1 across the replug.
  const stable = join(byId, 'usb-Demo_Bridge_0001-if00');
  const first = ptyPair(join(dir, 'dev0'), join(dir, 'ttyACM0'));
  const second = ptyPair(join(dir, 'dev1'), join(dir, 'ttyACM1'));
  await first.start();
  symlinkSync(realpathSync(first.host), stable);
  const source = createSerialSource(
    { kind: 'serial', path: first.host, baudRate: 115200 },
    { retryMinMs: 50, retryMaxMs: 200, byIdDir: byId, list: async () => [] },
  );
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    // Let the source learn the stable name of what it opened.
    await new Promise((r) => setTimeout(r, 200));
    await first.unplug();
    await until(() => got.statuses.some((s) => s.state === 'lost'), 5000, 'lost');
    // The old device node goes away, as udev removes it (pty numbers are reused, so a stale link could point anywhere).
    unlinkSync(first.host);
    await second.start();
    unlinkSync(stable);
    symlinkSync(realpathSync(second.host), stable);
    await until(() => got.statuses.filter((s) => s.state === 'open').length === 2, 10_000, 'open again');
    assert.match(got.statuses.at(-1)?.detail ?? '', /usb-Demo_Bridge_0001-if00 is back/);
    const device = await openDevice(second.device);
    await write(device, 'vbat=12.1\n');
    await until(() => got.lines.length === 1, 5000, 'a line through the stable name');
    assert.equal(got.lines[0].text, 'vbat=12.1');
    await closePort(device);
  } finally {
    await source.stop();
    await first.stop();
    await second.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('the data watchdog notices a device that vanished without a close event (binding-mock)', async () => {
  MockBinding.reset();
  MockBinding.createPort('/dev/ttyMOCK5', {});
  let present = true;
  const source = createSerialSource(
    { kind: 'serial', path: '/dev/ttyMOCK5', baudRate: 9600 },
    {
      watchdogS: 0.2,
      retryMinMs: 20,
      retryMaxMs: 50,
      openPort: (o) => new SerialPortMock({ path: o.path, baudRate: o.baudRate, autoOpen: false }),
      list: async () => [],
      exists: () => present,
    },
  );
  const got = collect(source);
  try {
    source.start();
    await until(() => got.statuses.some((s) => s.state === 'open'), 5000, 'open');
    // Silence alone is not an unplug: the device is still there.
    await new Promise((r) => setTimeout(r, 500));
    assert.ok(!got.statuses.some((s) => s.state === 'lost'));
    present = false;
    await until(() => got.statuses.some((s) => s.state === 'lost'), 5000, 'lost');
    assert.match(
      (got.statuses.find((s) => s.state === 'lost') as SourceStatus).detail,
      /vanished \(no data for 0.2 s\)/,
    );
  } finally {
    await source.stop();
    MockBinding.reset();
  }
});
