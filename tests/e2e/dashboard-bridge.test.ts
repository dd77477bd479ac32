/**
 * The renderer through the Electron preload's bridge instead of the WebSocket. The Electron
 * binary cannot run here, so the page gets a stand-in `window.taperline` with the preload's
 * two functions (request, onPush), relayed by this test to a real `taperline serve` over its
 * API. The page must use the bridge (open no WebSocket of its own) and work the same.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import WebSocket from 'ws';
import { WS_PATH } from '@shared/ipc/channels';
import { openBrowser, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId } from './helpers/page';

test('the dashboard over the preload bridge', { timeout: 180_000 }, async (t) => {
  const serve: ServeHandle = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '60']);
  let browser: BrowserSession | null = null;
  // The API needs the token on loopback too: the printed address carries it.
  const socket = new WebSocket(`ws://${new URL(serve.url).host}${WS_PATH}${new URL(serve.url).search}`);
  t.after(async () => {
    socket.close();
    await browser?.close();
    await serve.stop();
  });
  await new Promise<void>((resolve, reject) => socket.once('open', () => resolve()).once('error', reject));

  // The relay: requests from the page go out as envelopes, replies and pushes come back.
  let nextId = 1;
  const pending = new Map<number, { resolve(v: unknown): void; reject(e: Error): void }>();
  const pushes: unknown[] = [];
  let deliver: ((push: unknown) => void) | null = null;
  socket.on('message', (raw) => {
    const msg = JSON.parse(String(raw)) as {
      id?: number;
      ok?: boolean;
      result?: unknown;
      error?: string;
      push?: string;
    };
    if (msg.push !== undefined) {
      if (deliver) deliver(msg);
      else pushes.push(msg);
      return;
    }
    const p = pending.get(msg.id!);
    pending.delete(msg.id!);
    if (msg.ok) p?.resolve(msg.result);
    else p?.reject(new Error(msg.error));
  });

  browser = await openBrowser();
  const { page } = browser;
  const socketsOpened: string[] = [];
  page.on('websocket', (ws) => socketsOpened.push(ws.url()));
  await page.exposeFunction('__relayRequest', (method: string, params: unknown) => {
    const id = nextId++;
    socket.send(JSON.stringify({ id, method, params }));
    return new Promise((resolve, reject) => pending.set(id, { resolve, reject })).then(
      (result) => ({ ok: true, result }),
      (err: Error) => ({ ok: false, error: err.message }),
    );
  });
  // Same shape as main/electron/preload.ts: request() rejects with the backend's message.
  await page.addInitScript(() => {
    const listeners = new Set<(push: unknown) => void>();
    const relay = (
      window as unknown as {
        __relayRequest(m: string, p: unknown): Promise<{ ok: boolean; result?: unknown; error?: string }>;
      }
    ).__relayRequest;
    (window as unknown as { __relayPush(p: unknown): void }).__relayPush = (push) =>
      listeners.forEach((cb) => cb(push));
    (window as unknown as { taperline: unknown }).taperline = {
      async request(method: string, params: unknown) {
        const reply = await relay(method, params ?? {});
        if (!reply.ok) throw new Error(reply.error);
        return reply.result;
      },
      onPush(cb: (push: unknown) => void) {
        listeners.add(cb);
        return () => listeners.delete(cb);
      },
    };
  });
  await page.goto(pageUrl(serve, 'rack'));
  deliver = (push) =>
    void page
      .evaluate((p) => (window as unknown as { __relayPush(p: unknown): void }).__relayPush(p), push)
      .catch(() => {});
  pushes.length = 0;

  const stationId = await firstStationId(page);
  assert.equal(await page.locator('#link-state').textContent(), '● Connected');
  await page.locator(`#view-rack .tile[data-station="${stationId}"]`).click();
  // Pushes reach the Bench view through the bridge: the phase appears and the run time moves.
  await page.locator('#view-bench .phase-word').waitFor();
  const before = await page.locator('#view-bench .phase-since').textContent();
  await page.waitForFunction(
    (b) => document.querySelector('#view-bench .phase-since')?.textContent !== b,
    before,
    { timeout: 15_000 },
  );
  // A refusal comes back as the backend's message through the bridge too.
  await page.keyboard.press('Alt+5');
  await page.locator('#profile-cells').fill('0');
  await page.waitForFunction(
    () => /cells/i.test(document.querySelector('#profile-cells-err')?.textContent ?? ''),
    undefined,
    { timeout: 10_000 },
  );
  assert.deepEqual(socketsOpened, [], 'the page opened no WebSocket of its own');
});
