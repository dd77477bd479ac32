/**
 * The `overheating` scenario against a real `taperline serve`, in real Chromium: the engine
 * raises `overtemp`, the Bench view lists it (level in words and an icon) and the Rack tile
 * shows it; Acknowledge reaches the backend and every view shows the alarm acknowledged;
 * "Why?" opens the Diagnosis with ranked causes.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId, openViewByKey } from './helpers/page';

test('overtemp in the Bench and Rack views, acknowledged', { timeout: 240_000 }, async (t) => {
  // A healthy station from the command line; the overheating one is added in Connect & profile.
  const serve: ServeHandle = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '60']);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
  });
  browser = await openBrowser();
  const { page } = browser;
  await page.goto(pageUrl(serve, 'rack'));
  const healthyId = await firstStationId(page);
  // An id that sorts after the healthy station's, so only its trouble can put it first.
  const stationId = 'yard-box-1';

  await t.test('a simulated station is added from Connect & profile', async () => {
    await openViewByKey(page, 'connect');
    await page.locator('#scenario-overheating').check();
    // 60x: the scenario's 75 minutes take 75 s, so the alarm stays up long enough to act on.
    await page.locator('#sim-speedup').fill('60');
    await page.locator('#station-id').fill(stationId);
    await page.locator('#station-label').fill('Sealed box (demo)');
    await page.locator('#add-station').click();
    await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
    assert.equal(await page.locator('#bench-station').inputValue(), stationId);
  });

  const alarm = page.locator('#view-bench .alarm[data-code="overtemp"]').first();
  await alarm.waitFor({ timeout: 120_000 });

  await t.test('the Bench view lists overtemp with its level in words', async () => {
    const head = (await alarm.locator('.alarm-head').textContent()) ?? '';
    // docs/codes.md: overtemp = temperature above the charge window while charging.
    assert.match(head, /overtemp/);
    assert.match(head, /Critical|Warning/);
    assert.ok(
      ((await alarm.locator('.alarm-message').textContent()) ?? '').length > 10,
      'a message a person can act on',
    );
  });

  await t.test('the Rack tile shows the alarm, and the station in trouble comes first', async () => {
    await openViewByKey(page, 'rack');
    const tile = page.locator(`#view-rack .tile[data-station="${stationId}"]`);
    await page.waitForFunction(
      (id) =>
        /overtemp|fault-pin/.test(
          document.querySelector(`#view-rack .tile[data-station="${id}"] .tile-alarm`)?.textContent ?? '',
        ),
      stationId,
    );
    assert.match((await tile.getAttribute('aria-label')) ?? '', /alarm/);
    assert.match((await tile.getAttribute('class')) ?? '', /tile-trouble|tile-attention/);
    // Sorted by trouble: the critical alarm first, the healthy station after it.
    await page.waitForTimeout(600);
    const order = await page
      .locator('#view-rack .tile')
      .evaluateAll((els) => els.map((e) => e.getAttribute('data-station')));
    assert.deepEqual(order, [stationId, healthyId]);
    await screenshot(page, 'rack-alarm');
  });

  await t.test('the Bench view in fault', async () => {
    await openViewByKey(page, 'bench');
    await page.waitForTimeout(1000);
    await screenshot(page, 'bench-alarm');
  });

  await t.test('Acknowledge marks the alarm acknowledged', async () => {
    await openViewByKey(page, 'bench');
    // overtemp itself when it is still active, else the alarm that followed it (the charger's fault pin).
    const overtempActive = page.locator('#view-bench .alarm.is-active:not(.is-acked)[data-code="overtemp"]');
    const active =
      (await overtempActive.count()) > 0
        ? overtempActive.first()
        : page.locator('#view-bench .alarm.is-active:not(.is-acked)').first();
    await active.waitFor({ timeout: 30_000 });
    const code = await active.getAttribute('data-code');
    await active.locator('button', { hasText: 'Acknowledge' }).click();
    await page.waitForFunction(
      (c) => document.querySelector(`#view-bench .alarm.is-acked[data-code="${c}"]`) !== null,
      code,
      { timeout: 15_000 },
    );
    assert.match(
      (await page
        .locator(`#view-bench .alarm.is-acked[data-code="${code}"] .alarm-state`)
        .first()
        .textContent()) ?? '',
      /acknowledged/,
    );
    // A second tab hears it from the backend, not from this page.
    const other = await browser!.context.newPage();
    await other.goto(pageUrl(serve, 'bench'));
    await other
      .locator(`#view-bench .alarm.is-acked[data-code="${code}"]`)
      .first()
      .waitFor({ timeout: 15_000 });
    await other.close();
  });

  await t.test('Why? opens the Diagnosis of the fault', async () => {
    const why = page.locator('#view-bench .alarm button', { hasText: 'Why?' }).first();
    await why.click();
    await page.locator('#view-diagnosis .cause').first().waitFor({ timeout: 20_000 });
    const codes = await page
      .locator('#view-diagnosis .cause')
      .evaluateAll((els) => els.map((e) => e.getAttribute('data-code')));
    // The scenario is a pack overheating in a sealed box: overtemperature should be among the causes.
    assert.ok(codes.includes('overtemperature'), `causes: ${codes.join(', ')}`);
    const pct = await page
      .locator('#view-diagnosis .confidence')
      .evaluateAll((els) => els.map((e) => Number(e.getAttribute('aria-valuenow'))));
    assert.deepEqual(
      [...pct].sort((a, b) => b - a),
      pct,
      'ranked by confidence, highest first',
    );
    await page.waitForTimeout(500);
    await screenshot(page, 'diagnosis');
  });
});
