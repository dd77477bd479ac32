/**
 * `taperline ports`: the same ports serialport's own SerialPort.list() reports, by-id names
 * resolved through real symlinks, and a clear one-line message when udevadm is missing.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import { mkdirSync, mkdtempSync, realpathSync, rmSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { SerialPort, SerialPortMock } from 'serialport';
import { byIdLinks, describeListError, listPorts, PortListError } from '../../main/serial';
import { ptyPair } from './serial-pty';

const repo = resolve(__dirname, '..', '..');

function cli(
  args: string[],
  env: NodeJS.ProcessEnv = process.env,
): Promise<{ code: number | null; stdout: string; stderr: string }> {
  const child = spawn(process.execPath, ['--import', 'tsx', join(repo, 'main', 'cli', 'main.ts'), ...args], {
    cwd: repo,
    env,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  return new Promise((res) => child.on('exit', (code) => res({ code, stdout, stderr })));
}

test('ports --json lists what SerialPort.list() reports, with every field', async () => {
  const reference = (await SerialPort.list()).map((p) => p.path).sort();
  const { code, stdout, stderr } = await cli(['ports', '--json']);
  assert.equal(code, 0, stderr);
  const ports = JSON.parse(stdout) as Array<Record<string, unknown>>;
  assert.deepEqual(
    ports.map((p) => p.path),
    reference,
  );
  for (const p of ports)
    assert.deepEqual(Object.keys(p).sort(), [
      'byId',
      'manufacturer',
      'path',
      'productId',
      'serialNumber',
      'vendorId',
    ]);
  const table = await cli(['ports']);
  assert.equal(table.code, 0);
  assert.match(
    table.stdout,
    reference.length > 0 ? /^PORT\s+MAKER\s+SERIAL NO\.\s+USB ID\s+STABLE NAME/ : /No serial ports found/,
  );
});

test('without udevadm on PATH: one sentence, exit status 2, no stack trace', async () => {
  // Only the node binary is given by absolute path; the library's `udevadm` spawn finds nothing.
  const { code, stdout, stderr } = await cli(['ports'], { ...process.env, PATH: '/nonexistent' });
  assert.equal(code, 2);
  assert.equal(stdout, '');
  assert.equal(
    stderr,
    'taperline: cannot list serial ports: the udev tools (udevadm) are missing; install the udev package, or give --port PATH directly\n',
  );
  await assert.rejects(
    listPorts(async () => {
      throw Object.assign(new Error('spawn udevadm ENOENT'), { code: 'ENOENT', path: 'udevadm' });
    }),
    (err: unknown) => err instanceof PortListError && /udevadm\) are missing/.test(err.message),
  );
  assert.match(
    describeListError(new Error('permission denied\n    at x')),
    /^cannot list serial ports: permission denied; give --port PATH directly$/,
  );
});

test('by-id names resolve through their symlinks to the device (a real pty here)', async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-byid-'));
  const pair = ptyPair(join(dir, 'dev'), join(dir, 'host'));
  try {
    await pair.start();
    const byId = join(dir, 'by-id');
    mkdirSync(byId);
    // Invented stable name in the usual usb-<maker>_<product>_<serial>-if00 form.
    const link = join(byId, 'usb-Demo_Bridge_0001-if00');
    symlinkSync(realpathSync(pair.host), link);
    symlinkSync(join(dir, 'gone'), join(byId, 'usb-Demo_Bridge_0002-if00'));
    const links = await byIdLinks(byId);
    assert.deepEqual([...links], [[link, realpathSync(pair.host)]]);
    assert.equal((await byIdLinks(join(dir, 'no-such-dir'))).size, 0);
  } finally {
    await pair.stop();
    rmSync(dir, { recursive: true, force: true });
  }
});

test('port entries carry maker, serial number and USB id as the binding reports them (binding-mock)', async () => {
  const mock = SerialPortMock.binding;
  mock.reset();
  // Invented identities for two demo bridges.
  mock.createPort('/dev/ttyMOCK2', { manufacturer: 'Demo Bridges', vendorId: '1d6b', productId: '0104' });
  mock.createPort('/dev/ttyMOCK1', {});
  try {
    const ports = await listPorts(() => mock.list());
    assert.deepEqual(
      ports.map((p) => [p.path, p.manufacturer, p.vendorId, p.productId, typeof p.serialNumber]),
      [
        ['/dev/ttyMOCK1', 'The J5 Robotics Company', null, null, 'string'],
        ['/dev/ttyMOCK2', 'Demo Bridges', '1d6b', '0104', 'string'],
      ],
    );
  } finally {
    mock.reset();
  }
});
