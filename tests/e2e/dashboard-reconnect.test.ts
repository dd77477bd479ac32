/**
 * The web mode's WebSocket reconnects: `taperline serve` stops under an open page and starts
 * again on the same port with the same database; the page says it lost the backend, comes
 * back by itself, and shows the station again without a reload.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { rmSync } from 'node:fs';
import { openBrowser, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId } from './helpers/page';

test('the page reconnects after the backend restarts', { timeout: 180_000 }, async (t) => {
  const args = ['--simulate', 'bench-liion-3s', '--speedup', '60'];
  let serve: ServeHandle = await startServe(args, { keepDir: true });
  const dir = serve.dir;
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
    rmSync(dir, { recursive: true, force: true });
  });
  browser = await openBrowser();
  const { page } = browser;
  await page.goto(pageUrl(serve, 'rack'));
  const stationId = await firstStationId(page);
  const linkState = page.locator('#link-state');
  assert.match((await linkState.textContent()) ?? '', /Connected/);

  await page.locator(`#view-rack .tile[data-station="${stationId}"]`).click();
  await page.locator('#view-bench .rec-state', { hasText: 'Recording run 1' }).waitFor({ timeout: 15_000 });

  const port = Number(new URL(serve.url).port);
  const firstUrl = serve.url;
  await serve.stop();
  await page.waitForFunction(
    () => /unreachable|Connecting/.test(document.querySelector('#link-state')?.textContent ?? ''),
    undefined,
    { timeout: 15_000 },
  );

  // The same token: the open page's cookie must stay valid across the restart.
  const token = new URL(firstUrl).searchParams.get('token') ?? undefined;
  serve = await startServe(args, { port, dir, keepDir: true, token });
  await page.waitForFunction(
    () => /Connected/.test(document.querySelector('#link-state')?.textContent ?? ''),
    undefined,
    { timeout: 20_000 },
  );
  // The open Bench view follows the restarted station (a new run, same database) without a reload,
  // and its charts keep moving.
  await page.locator('#view-bench .rec-state', { hasText: 'Recording run 2' }).waitFor({ timeout: 15_000 });
  const label = await page.locator('#view-bench .window-label').textContent();
  await page.waitForFunction(
    (b) => document.querySelector('#view-bench .window-label')?.textContent !== b,
    label,
    { timeout: 15_000 },
  );
  // The station list was fetched again: the Rack tile has fresh readings.
  await page.keyboard.press('Alt+2');
  await page.waitForFunction(
    (id) =>
      /\d+\.\d\d V/.test(document.querySelector(`#view-rack .tile[data-station="${id}"]`)?.textContent ?? ''),
    stationId,
    { timeout: 15_000 },
  );
  // Requests work again over the new socket.
  await page.keyboard.press('Alt+3');
  await page.locator('#view-runs tr[data-run]').first().waitFor({ timeout: 15_000 });
  assert.ok(
    (await page.locator('#view-runs tr[data-run]').count()) >= 2,
    'the first run (stopped) and the new one',
  );
});
