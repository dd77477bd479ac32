/**
 * `taperline serve` as a person runs it: a real process with a simulated station, the
 * address on one line, pushes over the WebSocket, and a clean stop on Ctrl-C (SIGINT) that
 * leaves the run closed as stopped in the real SQLite file.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openRunReader } from '../../main/recorder';
import type { SampleBatch } from '@shared/ipc/pushes';
import { ApiClient, rawGet } from './server-harness';

const root = join(__dirname, '..', '..');

function startCli(args: string[]): {
  child: ChildProcess;
  firstLine: Promise<string>;
  stderr: () => string;
  exit: Promise<number | null>;
} {
  const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'main/cli/main.ts'), ...args], {
    cwd: root,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  let err = '';
  child.stderr!.setEncoding('utf8').on('data', (c: string) => (err += c));
  const firstLine = new Promise<string>((resolve, reject) => {
    child.stdout!.setEncoding('utf8').on('data', (c: string) => {
      out += c;
      if (out.includes('\n')) resolve(out.split('\n')[0]);
    });
    child.once('exit', () => reject(new Error(`serve exited before printing its address: ${err}`)));
  });
  firstLine.catch(() => undefined);
  const exit = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  return { child, firstLine, stderr: () => err, exit };
}

test(
  'serve --simulate prints its address, pushes samples and stops cleanly on SIGINT',
  { timeout: 60_000 },
  async () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-serve-'));
    const dbPath = join(dir, 'bench.sqlite');
    const cli = startCli([
      'serve',
      '--port',
      '0',
      '--simulate',
      'bench-liion-3s',
      '--speedup',
      '600',
      '--db',
      dbPath,
    ]);
    try {
      const line = await cli.firstLine;
      assert.match(
        line,
        /^Taperline is serving at http:\/\/127\.0\.0\.1:\d+\/\?token=[A-Za-z0-9_-]{32} \(1 station, recording to /,
      );
      const [, portText, token] = /:(\d+)\/\?token=([A-Za-z0-9_-]+)/.exec(line)!;
      const port = Number(portText);
      // The token is required on loopback too.
      await assert.rejects(ApiClient.connect(`ws://127.0.0.1:${port}/api/ws`), /HTTP 403/);
      const client = await ApiClient.connect(`ws://127.0.0.1:${port}/api/ws?token=${token}`);
      const list = await client.request('stations.list');
      const stations = (list as { result: { id: string; runId: number | null }[] }).result;
      assert.equal(stations.length, 1);
      const batch = (await client.waitForPush((p) => p.push === 'samples', 15_000)).data as SampleBatch;
      assert.equal(batch.stationId, stations[0].id);
      assert.ok(batch.tS.length >= 1);
      assert.ok(
        batch.vbatV.every((v) => v === null || (v > 6 && v < 13.5)),
        'a 3S Li-ion pack stays within 6..13.5 V',
      );
      assert.equal(
        (await rawGet(port, `/?token=${token}`)).headers['content-security-policy']?.includes(
          "script-src 'self'",
        ),
        true,
      );
      await client.close();

      cli.child.kill('SIGINT');
      assert.equal(await cli.exit, 0, cli.stderr());
      const reader = openRunReader(dbPath);
      try {
        const runs = reader.listRuns();
        assert.equal(runs.length, 1);
        assert.equal(runs[0].endReason, 'stopped');
        assert.ok(runs[0].lines > 0);
      } finally {
        reader.close();
      }
    } finally {
      if (cli.child.exitCode === null) cli.child.kill('SIGKILL');
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

test(
  'serve refuses an unknown scenario, a port station without a profile and an impossible baud rate, in one line',
  { timeout: 60_000 },
  async () => {
    const unknown = startCli(['serve', '--port', '0', '--no-record', '--simulate', 'moon-base']);
    assert.equal(await unknown.exit, 2);
    assert.match(unknown.stderr(), /^taperline: no scenario "moon-base"; known scenarios: .*bench-liion-3s/);
    const noProfile = startCli(['serve', '--port', '0', '--no-record', '--station-port', '/dev/ttyUSB9']);
    assert.equal(await noProfile.exit, 2);
    assert.match(noProfile.stderr(), /--station-port needs --profile/);
    // The same baud rule as `record`: no serial port runs at 10 Gbaud.
    const badBaud = startCli([
      'serve',
      '--port',
      '0',
      '--no-record',
      '--station-port',
      '/dev/ttyUSB9',
      '--profile',
      'p.json',
      '--baud',
      '1e10',
    ]);
    assert.equal(await badBaud.exit, 2);
    assert.match(
      badBaud.stderr(),
      /^taperline: --baud must be a baud rate, a whole number from 1 to 12000000 \(e\.g\. 115200\) \(got "1e10"\)$/m,
    );
  },
);

test(
  'serve --host 0.0.0.0 prints a token address that works from this machine and refuses requests without it',
  { timeout: 60_000 },
  async () => {
    const cli = startCli(['serve', '--host', '0.0.0.0', '--port', '0', '--no-record']);
    try {
      const line = await cli.firstLine;
      // A wildcard bind is printed as loopback: http://0.0.0.0:… is not an address a browser can open everywhere.
      const match = /http:\/\/127\.0\.0\.1:(\d+)\/\?token=([A-Za-z0-9_-]+)/.exec(line);
      assert.ok(match, line);
      const port = Number(match[1]);
      assert.equal((await rawGet(port, '/')).status, 403);
      assert.notEqual((await rawGet(port, `/?token=${match[2]}`)).status, 403);
    } finally {
      cli.child.kill('SIGTERM');
      assert.equal(await cli.exit, 0);
    }
  },
);
