/**
 * The Connect view offers a network board (its choices come from the table of source kinds):
 * a person types `tcp://HOST:PORT`, adds the station, and the lines a TCP server of the test's
 * own sends show in the Rack. A mistyped address is refused with the form to write.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { createServer, type AddressInfo, type Socket } from 'node:net';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { openViewByKey } from './helpers/page';

test('Connect view: a station on tcp://HOST:PORT', { timeout: 180_000 }, async (t) => {
  const sockets: Socket[] = [];
  const board = createServer((s) => sockets.push(s));
  await new Promise<void>((r) => board.listen(0, '127.0.0.1', () => r()));
  const port = (board.address() as AddressInfo).port;
  let serve: ServeHandle | null = null;
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve?.stop();
    for (const s of sockets) s.destroy();
    await new Promise<void>((r) => board.close(() => r()));
  });
  serve = await startServe([]);
  browser = await openBrowser();
  const { page } = browser;
  await page.goto(pageUrl(serve, 'connect'));
  await openViewByKey(page, 'connect');
  const kinds = await page
    .locator('#view-connect [name="source-kind"]')
    .evaluateAll((els) => els.map((e) => (e as HTMLInputElement).value));
  assert.deepEqual(kinds, ['serial', 'simulator', 'tcp']);
  await page.locator('label[for="source-kind-tcp"]').click();
  await page.locator('#tcp-address').waitFor({ state: 'visible' });
  await page.locator('#station-id').fill('wifi-board');
  await page.locator('#tcp-address').fill(`tcp://127.0.0.1`);
  await page.locator('#add-station').click();
  await page.getByText('Write the address as tcp://HOST:PORT').first().waitFor();
  await page.locator('#tcp-address').fill(`tcp://127.0.0.1:${port}`);
  await page.locator('#add-station').click();
  await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
  const deadline = Date.now() + 10_000;
  while (sockets.length === 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
  assert.equal(sockets.length, 1, 'the station connected to the board');
  // Invented demo lines: a trail camera's 2S pack in constant current.
  for (let i = 0; i < 5; i++) sockets[0]!.write(`t=${i} vbat=7.${40 + i} ibat=0.90 temp=24.5\n`);
  await openViewByKey(page, 'rack');
  const tile = page.locator('#view-rack .tile[data-station="wifi-board"]');
  await tile.waitFor();
  await page.waitForFunction(
    () =>
      /7\.44 V/.test(
        document.querySelector('#view-rack .tile[data-station="wifi-board"]')?.textContent ?? '',
      ),
    undefined,
    { timeout: 15_000 },
  );
  await screenshot(page, 'connect-tcp-rack');
  assert.deepEqual(browser.errors, []);
});
