/**
 * A server bound beyond loopback (0.0.0.0, every interface) requires its token on every
 * HTTP request and WebSocket upgrade. Traffic goes to 127.0.0.1 only.
 */
import { after, before, test } from 'node:test';
import assert from 'node:assert/strict';
import { createAccessPolicy, isLoopbackHost } from '../../main/server/access';
import { ApiClient, rawGet, startHarness, wsUrl, type Harness } from './server-harness';

let h: Harness;

before(async () => {
  h = await startHarness({ host: '0.0.0.0' });
});
after(async () => {
  await h?.close();
});

test('a non-loopback bind generates a token and prints an address that works from this machine', () => {
  assert.ok(h.server.token && h.server.token.length >= 32);
  assert.equal(h.server.url, `http://127.0.0.1:${h.server.port}/?token=${h.server.token}`);
});

test('HTTP without the token is refused; with it the page loads and a cookie carries it on', async () => {
  const without = await rawGet(h.server.port, '/');
  assert.equal(without.status, 403);
  assert.match(without.body, /token/);
  assert.equal((await rawGet(h.server.port, '/?token=wrong-token')).status, 403);
  assert.equal((await rawGet(h.server.port, '/app.js')).status, 403);

  const withToken = await rawGet(h.server.port, `/?token=${h.server.token}`);
  assert.equal(withToken.status, 200);
  const cookie = String(withToken.headers['set-cookie']);
  assert.match(cookie, /HttpOnly/);
  assert.match(cookie, /SameSite=Strict/);
  const pair = cookie.split(';')[0];
  assert.equal((await rawGet(h.server.port, '/app.js', { Cookie: pair })).status, 200);
  // A non-loopback bind answers to any Host name, since the token is the guard.
  assert.equal(
    (await rawGet(h.server.port, '/app.js', { Cookie: pair, Host: `bench-pc.local:${h.server.port}` }))
      .status,
    200,
  );
});

test('a WebSocket without the token is refused; with it, it works', async () => {
  await assert.rejects(ApiClient.connect(wsUrl(h.server, '')), /HTTP 403/);
  await assert.rejects(ApiClient.connect(wsUrl(h.server, '?token=nope')), /HTTP 403/);
  const byQuery = await ApiClient.connect(wsUrl(h.server, `?token=${h.server.token}`));
  assert.equal((await byQuery.request('stations.list')).ok, true);
  await byQuery.close();
  const byCookie = await ApiClient.connect(wsUrl(h.server, ''), {
    headers: { Cookie: `taperline_token=${h.server.token}` },
  });
  assert.equal((await byCookie.request('stations.list')).ok, true);
  await byCookie.close();
  // Even with the token, a page on another site may not open the socket.
  await assert.rejects(
    ApiClient.connect(wsUrl(h.server, `?token=${h.server.token}`), { origin: 'http://attacker.example' }),
    /HTTP 403/,
  );
});

test('a server without a token is impossible, on any bind', () => {
  assert.throws(() => createAccessPolicy('0.0.0.0', ''), /needs an access token/);
  assert.throws(() => createAccessPolicy('127.0.0.1', ''), /needs an access token/);
  // RFC 1122 section 3.2.1.3: all of 127.0.0.0/8 is loopback; RFC 4291: ::1 is.
  assert.equal(isLoopbackHost('127.0.0.2'), true);
  assert.equal(isLoopbackHost('[::1]'), true);
  assert.equal(isLoopbackHost('localhost'), true);
  assert.equal(isLoopbackHost('0.0.0.0'), false);
  assert.equal(isLoopbackHost('127.example.com'), false);
});
