/**
 * `taperline serve`'s server end to end on 127.0.0.1: real HTTP, a real `ws` client, a real
 * station on a socat pty pair recording to a real SQLite file.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import WebSocket from 'ws';
import { MAX_PUSHES_PER_SECOND } from '@shared/ipc/channels';
import type { SampleBatch } from '@shared/ipc/pushes';
import {
  ApiClient,
  openPtyPair,
  rawGet,
  startHarness,
  TRAIL_CAMERA_PROFILE,
  wsUrl,
  authed,
  type Harness,
  type PtyPair,
} from './server-harness';

let h: Harness;
let pty: PtyPair;
let a: ApiClient;
let b: ApiClient;

before(async () => {
  h = await startHarness();
  pty = await openPtyPair(h.dir);
  a = await ApiClient.connect(wsUrl(h.server));
  b = await ApiClient.connect(wsUrl(h.server));
});

after(async () => {
  await a?.close();
  await b?.close();
  await h?.close();
  await pty?.close();
});

test('a request gets a reply with the same id', async () => {
  const reply = await a.request('stations.list');
  assert.deepEqual(reply, { id: 1, ok: true, result: [] });
  const runs = await a.request('runs.list');
  assert.equal(runs.ok, true);
  assert.deepEqual(runs.ok && runs.result, []);
});

test('a bad message gets an error reply naming the bad field, and the server keeps going', async () => {
  const badField = await a.sendRaw(
    JSON.stringify({ id: 41, method: 'stations.send', params: { stationId: 'x', text: 5, ending: '\n' } }),
    41,
  );
  assert.equal(badField.ok, false);
  assert.match(!badField.ok ? badField.error : '', /stations\.send: text:/);

  const badEnding = await a.sendRaw(
    JSON.stringify({
      id: 42,
      method: 'stations.send',
      params: { stationId: 'x', text: 'hi', ending: '\n\n' },
    }),
    42,
  );
  assert.match(!badEnding.ok ? badEnding.error : '', /ending/);

  const unknown = await a.sendRaw(JSON.stringify({ id: 43, method: 'stations.explode', params: {} }), 43);
  assert.match(!unknown.ok ? unknown.error : '', /unknown method "stations\.explode"/);

  const extraKey = await a.sendRaw(
    JSON.stringify({ id: 44, method: 'runs.get', params: { runId: 1, sneaky: true } }),
    44,
  );
  assert.match(!extraKey.ok ? extraKey.error : '', /sneaky/);

  const notJson = await a.sendRaw('{"id": 45, "method":', -1);
  assert.match(!notJson.ok ? notJson.error : '', /not JSON/);

  const badEnvelope = await a.sendRaw(JSON.stringify({ id: 46, method: 7 }), 46);
  assert.match(!badEnvelope.ok ? badEnvelope.error : '', /bad request envelope: method/);

  const missingStation = await a.request('stations.remove', { stationId: 'garden-shed' });
  assert.match(!missingStation.ok ? missingStation.error : '', /no station "garden-shed"/);

  // Still answering after all of that.
  assert.equal((await a.request('stations.list')).ok, true);
});

test('a bad profile is refused with the key named', async () => {
  const reply = await a.request('profile.validate', { profile: { chemistry: 'li-ion', cells: 0 } });
  assert.equal(reply.ok, true);
  const result = (reply as { result: { ok: boolean; key?: string } }).result;
  assert.equal(result.ok, false);
  assert.equal(result.key, 'cells');
});

test('pushes from a live station reach two clients within seconds', async () => {
  const added = await a.request('stations.add', {
    config: {
      id: 'trail-cam',
      label: 'Trail camera',
      source: { kind: 'serial', path: pty.stationPath, baudRate: 115200 },
      profile: TRAIL_CAMERA_PROFILE,
    },
  });
  assert.equal(added.ok, true, JSON.stringify(added));
  await a.waitForPush(
    (p) => p.push === 'station' && (p.data as { source: { state: string } }).source.state === 'open',
  );

  const started = Date.now();
  for (let i = 0; i < 20; i++) {
    pty.write(
      `t=${i} vbat=${(7.2 + i * 0.01).toFixed(3)} ibat=0.5 temp=25.0 vin=12.0 iin=0.35 chg=1 flt=0\n`,
    );
  }
  pty.write('# invented demo firmware banner\n');
  const isSamples = (p: { push: string; data: unknown }) =>
    p.push === 'samples' && (p.data as SampleBatch).stationId === 'trail-cam';
  const [fromA, fromB] = await Promise.all([a.waitForPush(isSamples), b.waitForPush(isSamples)]);
  console.log(`first samples push after ${Date.now() - started} ms`);
  const batch = fromA.data as SampleBatch;
  assert.equal(batch.tS.length, batch.vbatV.length);
  assert.equal(batch.tS.length, batch.iinA.length);
  assert.equal(batch.vbatV[0], 7.2);
  assert.deepEqual((fromB.data as SampleBatch).stationId, 'trail-cam');

  await a.waitForPush(
    (p) =>
      p.push === 'lines' &&
      (p.data as { lines: { kind: string }[] }).lines.some((l) => l.kind === 'firmware'),
  );
  // Wait until all 20 samples have arrived in batches.
  const deadline = Date.now() + 10_000;
  const count = () => a.pushes.filter(isSamples).reduce((n, p) => n + (p.data as SampleBatch).tS.length, 0);
  while (count() < 20 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
  assert.equal(count(), 20);

  const history = await b.request('stations.history', { stationId: 'trail-cam' });
  assert.equal(history.ok, true);
  const kept = (history as { result: { samples: SampleBatch; lines: unknown[] } }).result;
  // One sample per second of device time is kept: t = 0..19.
  assert.equal(kept.samples.tS.length, 20);
  assert.ok(kept.lines.length >= 21);
});

test('station snapshots are throttled to MAX_PUSHES_PER_SECOND per station', async () => {
  const before = a.pushes.length;
  const startMs = Date.now();
  for (let i = 20; i < 220; i++)
    pty.write(`t=${i} vbat=7.4 ibat=0.5 temp=25.0 vin=12.0 iin=0.35 chg=1 flt=0\n`);
  await new Promise((r) => setTimeout(r, 1500));
  const elapsedS = (Date.now() - startMs) / 1000;
  const snapshots = a.pushes.slice(before).filter((p) => p.push === 'station').length;
  assert.ok(snapshots >= 1, 'at least one snapshot');
  // Design rule: live redraws and snapshots at most MAX_PUSHES_PER_SECOND per station (+1 for the window edge).
  assert.ok(
    snapshots <= Math.ceil(elapsedS * MAX_PUSHES_PER_SECOND) + 1,
    `${snapshots} snapshots in ${elapsedS} s`,
  );
});

test('an alarm ack reaches every client and is held by the service; only a raised alarm can be acked', async () => {
  // A bogus ack is refused: acks travel with every station push, so they must be bounded by real alarms.
  const bogus = await a.request('stations.ackAlarm', { stationId: 'trail-cam', code: 'overtemp', t: 12 });
  assert.equal(bogus.ok, false);
  assert.match(!bogus.ok ? bogus.error : '', /raised no alarm "overtemp" at t=12: nothing to acknowledge/);
  // Invented hot pack: 62 °C is above the Li-ion charge window's 45 °C upper limit (the profile default).
  for (let i = 220; i < 235; i++)
    pty.write(`t=${i} vbat=7.4 ibat=0.5 temp=62.0 vin=12.0 iin=0.35 chg=1 flt=0\n`);
  const raised = (
    await a.waitForPush(
      (p) => p.push === 'event' && (p.data as { event: { type: string } }).event.type === 'alarm',
      10_000,
    )
  ).data as { event: { code: string; t: number } };
  const { code, t } = raised.event;
  const ack = await a.request('stations.ackAlarm', { stationId: 'trail-cam', code, t });
  assert.deepEqual(ack, { id: ack.id, ok: true, result: { stationId: 'trail-cam', code, t } });
  const seen = await b.waitForPush((p) => p.push === 'alarm-ack');
  assert.deepEqual(seen.data, { stationId: 'trail-cam', code, t });
  const late = await ApiClient.connect(wsUrl(h.server));
  const list = await late.request('stations.list');
  const station = (list as { result: { id: string; acks: unknown[] }[] }).result.find(
    (s) => s.id === 'trail-cam',
  );
  assert.deepEqual(station?.acks, [{ stationId: 'trail-cam', code, t }]);
  await late.close();
});

test('a request may leave out params when the method takes none', async () => {
  const reply = await a.sendRaw(JSON.stringify({ id: 77, method: 'stations.list' }), 77);
  assert.equal(reply.ok, true);
});

test('loopback needs the token too; Host is parsed strictly; refusals carry the security headers and echo nothing', async () => {
  const page = await rawGet(h.server.port, '/', authed(h.server));
  assert.equal(page.status, 200);
  const noToken = await rawGet(h.server.port, '/');
  assert.equal(noToken.status, 403);
  assert.match(noToken.body, /access token/);
  await assert.rejects(ApiClient.connect(wsUrl(h.server, '')), /HTTP 403/);
  // Userinfo-style trick: not a host name and port (RFC 9110 section 7.2), so not loopback.
  const tricked = await rawGet(h.server.port, '/', {
    ...authed(h.server),
    Host: `127.0.0.1:${h.server.port}@evil.example`,
  });
  assert.equal(tricked.status, 400);
  const foreign = await rawGet(h.server.port, '/', {
    ...authed(h.server),
    Host: `evil.example:${h.server.port}`,
  });
  assert.equal(foreign.status, 403);
  for (const refused of [noToken, tricked, foreign]) {
    assert.doesNotMatch(refused.body, /evil\.example/);
    for (const name of [
      'content-security-policy',
      'x-content-type-options',
      'referrer-policy',
      'x-frame-options',
      'cross-origin-opener-policy',
      'cross-origin-resource-policy',
    ])
      assert.ok(refused.headers[name] !== undefined && page.headers[name] !== undefined, name);
    assert.doesNotMatch(String(refused.headers['content-security-policy']), /evil/);
  }
  assert.equal(h.server.url, `http://127.0.0.1:${h.server.port}/?token=${h.server.token}`);
});

test('recorded runs can be listed, read and exported as CSV over HTTP', async () => {
  h.recorder.flush();
  const runs = await a.request('runs.list');
  const rows = (runs as { result: { id: number; stationId: string }[] }).result;
  const run = rows.find((r) => r.stationId === 'trail-cam');
  assert.ok(run, 'the live station has a run');
  const samples = await a.request('runs.samples', { runId: run.id, fromT: 0, toT: 5 });
  assert.equal(samples.ok, true);
  assert.ok((samples as { result: unknown[] }).result.length >= 5);
  const exported = await a.request('runs.exportCsv', { runId: run.id });
  assert.deepEqual((exported as { result: unknown }).result, { url: `/api/runs/${run.id}/export.csv` });
  const csv = await rawGet(h.server.port, `/api/runs/${run.id}/export.csv`, authed(h.server));
  assert.equal(csv.status, 200);
  assert.match(String(csv.headers['content-type']), /text\/csv/);
  assert.ok(csv.body.split('\n').length > 20);
  assert.equal((await rawGet(h.server.port, '/api/runs/99999/export.csv', authed(h.server))).status, 404);
  const del = await a.request('runs.delete', { runId: run.id });
  assert.match(!del.ok ? del.error : '', /still recording/);
});

test('the page is served with the strict CSP header', async () => {
  const page = await rawGet(h.server.port, '/', authed(h.server));
  assert.equal(page.status, 200);
  assert.match(page.body, /<title>Taperline<\/title>/);
  const csp = String(page.headers['content-security-policy']);
  for (const directive of [
    "default-src 'self'",
    "script-src 'self'",
    "style-src 'self'",
    "img-src 'self' data:",
    `connect-src 'self' ws://127.0.0.1:${h.server.port}`,
    "object-src 'none'",
    "base-uri 'none'",
    "frame-ancestors 'none'",
  ]) {
    assert.ok(csp.includes(directive), `CSP has ${directive}: ${csp}`);
  }
  assert.equal(page.headers['x-content-type-options'], 'nosniff');
  const script = await rawGet(h.server.port, '/app.js', authed(h.server));
  assert.match(String(script.headers['content-type']), /text\/javascript/);
});

test('paths that leave the renderer folder are refused', async () => {
  for (const path of [
    '/../package.json',
    '/../secret.txt',
    '/%2e%2e/secret.txt',
    '/..%2fsecret.txt',
    '/a/../../secret.txt',
    '/.hidden',
    '/x%00.js',
  ]) {
    const res = await rawGet(h.server.port, path, authed(h.server));
    assert.ok(res.status === 403 || res.status === 400, `${path} -> ${res.status}`);
    assert.doesNotMatch(res.body, /outside the renderer folder/);
  }
  assert.equal((await rawGet(h.server.port, '/nope.js', authed(h.server))).status, 404);
});

test('a loopback server refuses a foreign Host header and a cross-site WebSocket', async () => {
  // DNS rebinding: a page on another site whose name resolves to 127.0.0.1.
  const rebound = await rawGet(h.server.port, '/', {
    ...authed(h.server),
    Host: `attacker.example:${h.server.port}`,
  });
  assert.equal(rebound.status, 403);
  await assert.rejects(ApiClient.connect(wsUrl(h.server), { origin: 'http://attacker.example' }), /HTTP 403/);
  const sameSite = await ApiClient.connect(wsUrl(h.server), { origin: `http://127.0.0.1:${h.server.port}` });
  assert.equal((await sameSite.request('stations.list')).ok, true);
  await sameSite.close();
  await assert.rejects(ApiClient.connect(`ws://127.0.0.1:${h.server.port}/api/other`), /HTTP 404/);
});

test('a binary frame and an oversized frame do not crash the server', async () => {
  const reply = new Promise<string>((resolve) => a.ws.once('message', (d) => resolve(d.toString())));
  a.ws.send(Buffer.from([1, 2, 3]), { binary: true });
  assert.match(await reply, /binary messages/);
  const big = new WebSocket(wsUrl(h.server));
  await new Promise((r) => big.once('open', r));
  const closed = new Promise<number>((resolve) => big.once('close', (code) => resolve(code)));
  big.send('x'.repeat(2 * 1024 * 1024));
  assert.equal(await closed, 1009); // RFC 6455 section 7.4.1: 1009 = message too big
  assert.equal((await b.request('stations.list')).ok, true);
});
