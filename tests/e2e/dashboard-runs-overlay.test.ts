/**
 * Runs overlaid on the same axes, in real Chromium at 1280×720 against a real `taperline serve`:
 * two recorded charges of the demo garden-sensor pack, ticked in the Runs view and drawn
 * together, aligned at the cc→cv change.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { openViewByKey } from './helpers/page';
import { alignOffset } from '../../renderer/views/run-overlay';

test('align offsets: 0 at start, the first cv phase event at cc→cv, none without one', () => {
  const events = [
    { type: 'phase', phase: 'cc', t: 0 },
    { type: 'phase', phase: 'cv', t: 312 },
    { type: 'phase', phase: 'cv', t: 900 },
  ];
  assert.equal(alignOffset(events, 'start'), 0);
  assert.equal(alignOffset(events, 'cv'), 312);
  assert.equal(alignOffset([{ type: 'phase', phase: 'cc', t: 0 }], 'cv'), null);
});

test('two runs overlaid at the cc→cv change', { timeout: 180_000 }, async (t) => {
  const serve: ServeHandle = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '1200']);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
  });
  browser = await openBrowser({ width: 1280, height: 720 });
  const { page } = browser;
  await page.goto(pageUrl(serve, 'connect'));
  await openViewByKey(page, 'connect');
  await page.locator('#scenario-bench-liion-3s').check();
  await page.locator('#sim-speedup').fill('1200');
  await page.locator('#station-id').fill('shelf-2');
  // The same pack name as the command-line station, so the two runs form one pack's history.
  await page.locator('#profile-name').fill('garden-sensor 3S Li-ion (demo)');
  await page.locator('#add-station').click();
  await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
  // Both charges reach done (about 8 s each at 1200x).
  await page.waitForFunction(
    () => document.querySelector('#view-bench .phase-word')?.getAttribute('data-phase') === 'done',
    undefined,
    { timeout: 60_000 },
  );

  await openViewByKey(page, 'runs');
  await page.locator('tr[data-run="2"]').waitFor();
  await page.locator('tr[data-run="1"] .compare-box').check();
  await page.locator('tr[data-run="2"] .compare-box').check();
  await page.locator('#overlay-align').selectOption('cv');
  await page.locator('#overlay-runs').click();
  const overlay = page.locator('.run-overlay');
  await page.waitForFunction(
    () => document.querySelector('.run-overlay')?.getAttribute('data-runs') === '1,2',
  );
  assert.equal(await overlay.locator('.overlay-legend li').count(), 2);
  assert.match(
    (await overlay.locator('h3').textContent()) ?? '',
    /2 runs overlaid, aligned at the cc→cv change/,
  );
  const inked = await overlay.locator('canvas').evaluateAll((els) =>
    els.map((el) => {
      const c = el as HTMLCanvasElement;
      const data = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let i = 3; i < data.length; i += 4) if (data[i] > 0) n++;
      return n / (c.width * c.height);
    }),
  );
  assert.equal(inked.length, 3);
  for (const f of inked) assert.ok(f > 0.01, `a chart drew its runs (${f})`);
  await screenshot(page, 'runs-overlay');

  // Per-pack history: the runs of the same pack, oldest first, the first completed one the reference.
  await page.locator('#pack-history').selectOption('profile garden-sensor 3S Li-ion (demo)');
  const history = page.locator('.pack-history');
  await history.waitFor();
  assert.deepEqual(
    await history.locator('tbody tr').evaluateAll((els) => els.map((e) => e.getAttribute('data-run'))),
    ['1', '2'],
  );
  assert.match((await history.locator('tbody tr').first().textContent()) ?? '', /reference/);
  assert.match((await history.locator('tbody tr').nth(1).textContent()) ?? '', /[+−]\d+\.\d %/);
  // The engine's internal-resistance estimate, recorded with each run by the station manager.
  assert.match((await history.locator('thead').textContent()) ?? '', /Internal resistance/);
  for (const row of await history.locator('tbody tr').all())
    assert.match((await row.textContent()) ?? '', /\d+ mΩ/);
  await history.scrollIntoViewIfNeeded();
  await screenshot(page, 'runs-pack-history');
});
