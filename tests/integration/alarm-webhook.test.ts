/**
 * `serve --webhook URL`: the shipped CLI posts every alarm as JSON to an HTTP server of this
 * test's own on 127.0.0.1; a failed delivery is retried a bounded number of times and then
 * logged. Run `npm run build` first (the test runs dist/cli.cjs).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import { EventEmitter } from 'node:events';
import { createServer, type IncomingMessage, type Server } from 'node:http';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import { startAlarmWebhook, type AlarmWebhookBody } from '../../main/app/alarm-webhook';
import type { StationManager } from '../../main/station/types';

const CLI = join(process.cwd(), 'dist', 'cli.cjs');

interface Hook {
  url: string;
  bodies: AlarmWebhookBody[];
  hits: number;
  close(): Promise<void>;
}

/** An HTTP server that answers the first `failFirst` posts with 503, then 204. */
async function startHook(failFirst: number): Promise<Hook> {
  const hook = { bodies: [] as AlarmWebhookBody[], hits: 0 };
  const readBody = (req: IncomingMessage) =>
    new Promise<string>((resolve) => {
      let text = '';
      req.on('data', (d) => (text += String(d)));
      req.on('end', () => resolve(text));
    });
  const server: Server = createServer(async (req, res) => {
    const text = await readBody(req);
    hook.hits++;
    assert.equal(req.method, 'POST');
    assert.match(req.headers['content-type'] ?? '', /application\/json/);
    if (hook.hits <= failFirst) {
      res.writeHead(503).end();
      return;
    }
    hook.bodies.push(JSON.parse(text) as AlarmWebhookBody);
    res.writeHead(204).end();
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${port}/taperline-alarm`,
    get bodies() {
      return hook.bodies;
    },
    get hits() {
      return hook.hits;
    },
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

test(
  'serve --webhook posts the overheating scenario alarms, retrying a 503',
  { timeout: 120_000 },
  async (t) => {
    const hook = await startHook(1);
    const dir = mkdtempSync(join(tmpdir(), 'taperline-webhook-'));
    const child = spawn(
      process.execPath,
      [
        CLI,
        'serve',
        '--port',
        '0',
        '--db',
        join(dir, 'runs.sqlite'),
        '--simulate',
        'overheating',
        '--speedup',
        '600',
        '--webhook',
        hook.url,
      ],
      { stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let out = '';
    child.stdout.on('data', (d) => (out += String(d)));
    child.stderr.on('data', (d) => (out += String(d)));
    t.after(async () => {
      if (child.exitCode === null) {
        child.kill('SIGTERM');
        await new Promise((resolve) => child.once('exit', resolve));
      }
      await hook.close();
      rmSync(dir, { recursive: true, force: true });
    });

    const deadline = Date.now() + 90_000;
    while (!hook.bodies.some((b) => b.code === 'overtemp') && Date.now() < deadline) {
      await new Promise((resolve) => setTimeout(resolve, 250));
    }
    const overtemp = hook.bodies.find((b) => b.code === 'overtemp');
    assert.ok(overtemp, `no overtemp posted; got ${JSON.stringify(hook.bodies)}\n${out}`);
    assert.equal(overtemp.type, 'alarm');
    assert.equal(overtemp.level, 'critical');
    assert.match(overtemp.station, /overheating/);
    assert.ok(overtemp.message.length > 10, 'a message a person can act on');
    assert.equal(typeof overtemp.run, 'number');
    assert.ok(Number.isFinite(Date.parse(overtemp.atIso)));
    // The first post met a 503: it was retried (logged) and then arrived.
    assert.match(out, /webhook: .* not delivered \(HTTP 503\); retrying/);
    assert.match(out, /Alarms are posted to http:\/\/127\.0\.0\.1/);
  },
);

test('a webhook that never answers 2xx is given up after the bounded retries, and logged', async () => {
  const hook = await startHook(Infinity);
  const stations = new EventEmitter() as unknown as StationManager;
  (stations as unknown as { get: () => null }).get = () => null;
  const log: string[] = [];
  const webhook = startAlarmWebhook({
    url: hook.url,
    stations,
    log: (l) => log.push(l),
    retryDelaysMs: [20, 40],
  });
  stations.emit('event', {
    stationId: 'shelf-3',
    event: { type: 'alarm', t: 12, code: 'silence', level: 'warn', message: 'no line for 10 s' },
  });
  // Not an alarm: nothing is posted for it.
  stations.emit('event', { stationId: 'shelf-3', event: { type: 'phase', t: 13, phase: 'cc' } });
  await webhook.idle();
  webhook.stop();
  await hook.close();
  assert.equal(hook.hits, 3, 'one try and two retries');
  assert.deepEqual(webhook.stats, { sent: 0, failed: 1, dropped: 0 });
  assert.equal(log.filter((l) => /retrying/.test(l)).length, 2);
  assert.match(log.at(-1) ?? '', /gave up on silence on shelf-3 after 3 tries \(HTTP 503\)/);
});

test('a webhook address nobody listens on fails fast and is logged, not thrown', async () => {
  // Bind and close to get a port that is free right now.
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise<void>((resolve) => probe.close(() => resolve()));
  const stations = new EventEmitter() as unknown as StationManager;
  (stations as unknown as { get: () => null }).get = () => null;
  const log: string[] = [];
  const webhook = startAlarmWebhook({
    url: `http://127.0.0.1:${port}/`,
    stations,
    log: (l) => log.push(l),
    retryDelaysMs: [10],
  });
  stations.emit('event', {
    stationId: 'shelf-4',
    event: { type: 'alarm', t: 1, code: 'fault-pin', level: 'critical', message: 'fault output asserted' },
  });
  await webhook.idle();
  assert.equal(webhook.stats.failed, 1);
  assert.match(log.at(-1) ?? '', /gave up on fault-pin on shelf-4 after 2 tries \(ECONNREFUSED\)/);
});

test('serve refuses a webhook address that is not http(s)', async () => {
  const child = spawn(
    process.execPath,
    [CLI, 'serve', '--no-record', '--port', '0', '--webhook', 'ftp://x'],
    {
      stdio: ['ignore', 'pipe', 'pipe'],
    },
  );
  let err = '';
  child.stderr.on('data', (d) => (err += String(d)));
  const code = await new Promise<number | null>((resolve) => child.once('exit', resolve));
  assert.equal(code, 2);
  assert.match(err, /--webhook needs an http:\/\/ or https:\/\/ address, got "ftp:\/\/x"/);
});
