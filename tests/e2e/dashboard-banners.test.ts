/**
 * Red is for trouble only, in real Chromium at 1280×720 against a real `taperline serve`: a
 * simulated scenario that reaches its end and a replayed run are information, not failures;
 * a replay never says "Recording failed". Deleting a run asks first, with the safe choice
 * focused, and Escape keeps the run.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId, openViewByKey } from './helpers/page';

/** The stylesheet's trouble background (--crit-bg, #f5d6cf). */
const TROUBLE_BG = 'rgb(245, 214, 207)';

test('ended scenarios and replays are not red; delete asks safely', { timeout: 240_000 }, async (t) => {
  // 2.5 h of charge at 1200x: the scenario ends in under 10 s.
  const serve: ServeHandle = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '1200']);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
  });
  browser = await openBrowser({ width: 1280, height: 720 });
  const { page } = browser;
  await page.goto(pageUrl(serve, 'rack'));
  const stationId = await firstStationId(page);
  await page.locator(`#view-rack .tile[data-station="${stationId}"]`).click();

  await t.test('the end of a scenario is said plainly, not in red', async () => {
    const source = page.locator('#view-bench .source-state');
    await page.waitForFunction(
      () => document.querySelector('#view-bench .source-state')?.getAttribute('data-state') === 'closed',
      undefined,
      { timeout: 60_000 },
    );
    assert.match((await source.textContent()) ?? '', /ended — .*end of its scenario/);
    const bg = await source.evaluate((el) => getComputedStyle(el).backgroundColor);
    assert.notEqual(bg, TROUBLE_BG);
    assert.equal(await page.locator('#view-bench .rec-bad').count(), 0);
    await screenshot(page, 'bench-scenario-ended');
  });

  await t.test('a replayed run is not "Recording failed"', async () => {
    await openViewByKey(page, 'runs');
    await page.locator('#replay-speed').selectOption({ label: 'As fast as possible' });
    await page.locator('tr[data-run="1"] button', { hasText: 'Replay' }).click();
    await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
    const rec = page.locator('#view-bench .rec-state');
    await page.waitForFunction(
      () => document.querySelector('#view-bench .rec-state')?.getAttribute('data-state') === 'off',
      undefined,
      { timeout: 15_000 },
    );
    const text = (await rec.textContent()) ?? '';
    assert.match(text, /Replay: not recorded again/);
    assert.doesNotMatch(
      await page.locator('#view-bench').innerText(),
      /Recording failed|no database is open/,
    );
    assert.notEqual(await rec.evaluate((el) => getComputedStyle(el).backgroundColor), TROUBLE_BG);
    // The replay reaches its end too: still not red.
    await page.waitForFunction(
      () => document.querySelector('#view-bench .source-state')?.getAttribute('data-state') === 'closed',
      undefined,
      { timeout: 60_000 },
    );
    const bg = await page
      .locator('#view-bench .source-state')
      .evaluate((el) => getComputedStyle(el).backgroundColor);
    assert.notEqual(bg, TROUBLE_BG);
    await screenshot(page, 'bench-replay-ended');
  });

  await t.test('Delete… focuses "Keep it"; Escape keeps the run', async () => {
    await openViewByKey(page, 'runs');
    const row = page.locator('tr[data-run="1"]');
    await row.locator('button', { hasText: 'Delete…' }).click();
    const focused = await page.evaluate(() => document.activeElement?.textContent ?? '');
    assert.equal(focused, 'Keep it');
    await screenshot(page, 'runs-delete-confirm');
    await page.keyboard.press('Escape');
    await page.locator('.runs-status', { hasText: 'Run 1 was kept.' }).waitFor();
    assert.equal(await row.locator('button', { hasText: 'Yes, delete' }).count(), 0);
    // Focus returns to the Delete… button of the same run.
    assert.equal(await page.evaluate(() => document.activeElement?.textContent ?? ''), 'Delete…');
    // Enter on the focused safe choice keeps it too.
    await row.locator('button', { hasText: 'Delete…' }).click();
    await page.keyboard.press('Enter');
    await page.locator('.runs-status', { hasText: 'Run 1 was kept.' }).waitFor();
    assert.equal(await page.locator('tr[data-run="1"]').count(), 1);
  });

  await t.test('search finds runs by what they say; the Run report as PDF from the app', async () => {
    await page.locator('#runs-search').fill('no-such-board');
    await page.locator('td', { hasText: 'No run matches' }).waitFor();
    await page.locator('#runs-search').fill('garden-sensor');
    await page.locator('tr[data-run="1"]').waitFor();
    await page.locator('#runs-ended').selectOption('interrupted');
    assert.equal(await page.locator('tr[data-run="1"]').count(), 0);
    await page.locator('#runs-ended').selectOption('');
    await page.locator('tr[data-run="1"] button', { hasText: 'PDF' }).click();
    const link = page.locator('#pdf-link');
    await link.waitFor({ timeout: 90_000 });
    const href = (await link.getAttribute('href')) ?? '';
    const bytes = await page.evaluate(async (u) => {
      const res = await fetch(u);
      return [...new Uint8Array(await res.arrayBuffer()).slice(0, 5)];
    }, href);
    assert.equal(String.fromCharCode(...bytes), '%PDF-');
    await screenshot(page, 'runs-search-pdf');
  });
});
