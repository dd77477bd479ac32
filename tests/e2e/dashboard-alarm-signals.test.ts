/**
 * Alarms that reach a person, in real Chromium at 1280×720 against a real `taperline serve`:
 * the top-bar indicator (count, level, Acknowledge all) on a view that shows no alarms itself,
 * the page title, the opt-in beep (Web Audio) and desktop notification (the browser's
 * Notification API, permission granted to the page as a person would), the Rack's held order
 * while the pointer rests on it, and acknowledged alarms looking different from active ones.
 *
 * The page's own Notification and AudioContext are used; an init script only counts the calls
 * (the headless browser has no screen or speaker to observe them on).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId, openViewByKey } from './helpers/page';

const COUNTERS = `
  window.__signals = { notifications: [], tones: 0 };
  const RealNotification = window.Notification;
  if (RealNotification) {
    const Counted = function (title, options) {
      window.__signals.notifications.push({ title, body: options && options.body });
      return new RealNotification(title, options);
    };
    Object.defineProperty(Counted, 'permission', { get: () => RealNotification.permission });
    Counted.requestPermission = (...a) => RealNotification.requestPermission(...a);
    window.Notification = Counted;
  }
  const realOsc = AudioContext.prototype.createOscillator;
  AudioContext.prototype.createOscillator = function () {
    window.__signals.tones++;
    return realOsc.call(this);
  };
`;

interface Signals {
  notifications: { title: string; body?: string }[];
  tones: number;
}

test('an alarm reaches a person on every view', { timeout: 300_000 }, async (t) => {
  const serve: ServeHandle = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '60']);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
  });
  browser = await openBrowser({ width: 1280, height: 720 });
  const { page, context } = browser;
  await context.grantPermissions(['notifications'], { origin: serve.origin });
  await page.addInitScript(COUNTERS);
  await page.goto(pageUrl(serve, 'rack'));
  const healthyId = await firstStationId(page);
  // Sorts after the healthy station's id: only its alarm can move it first.
  const stationId = 'yard-box-1';
  const signals = () => page.evaluate(() => (window as unknown as { __signals: Signals }).__signals);

  await t.test('with no alarm the indicator says so, on every view', async () => {
    const indicator = page.locator('#alarm-indicator');
    await indicator.waitFor();
    assert.match((await indicator.textContent()) ?? '', /No alarms/);
    assert.doesNotMatch(await page.title(), /alarm/i);
  });

  await t.test('sound and desktop notifications are off until turned on', async () => {
    await page.locator('#alarm-indicator').click();
    const sound = page.locator('#signal-sound');
    const notify = page.locator('#signal-notify');
    assert.equal(await sound.isChecked(), false);
    assert.equal(await notify.isChecked(), false);
    await sound.check();
    // Turning the sound on plays the beep once, so the person knows what it sounds like.
    await page.waitForFunction(() => (window as unknown as { __signals: Signals }).__signals.tones >= 2);
    await notify.check();
    await page.locator('.alarm-panel-status', { hasText: 'Desktop notifications on' }).waitFor();
    await screenshot(page, 'alarm-signals-opt-in');
    await page.keyboard.press('Escape');
    assert.equal(await page.locator('#alarm-panel').isHidden(), true);
  });

  await t.test('a second station that overheats is added', async () => {
    await openViewByKey(page, 'connect');
    await page.locator('#scenario-overheating').check();
    await page.locator('#sim-speedup').fill('60');
    await page.locator('#station-id').fill(stationId);
    await page.locator('#station-label').fill('Sealed box (demo)');
    await page.locator('#add-station').click();
    await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
  });

  const order = () =>
    page.locator('#view-rack .tile').evaluateAll((els) => els.map((e) => e.getAttribute('data-station')));

  await t.test('Rack tiles hold their order while the pointer rests on one', async () => {
    await openViewByKey(page, 'rack');
    await page.locator(`#view-rack .tile[data-station="${stationId}"]`).waitFor();
    await page.waitForTimeout(700);
    assert.deepEqual(await order(), [healthyId, stationId]);
    // Each sparkline says what it shows (Rack tiles are read from across the room).
    assert.match(
      (await page.locator(`#view-rack .tile[data-station="${healthyId}"] .tile-spark-label`).textContent()) ??
        '',
      /^Pack voltage, last \d+ (min|h): \d+\.\d\d–\d+\.\d\d V$/,
    );
    await page.locator(`#view-rack .tile[data-station="${healthyId}"]`).hover();
    // The alarm raises the overheating station's rank; the order must not change under the pointer.
    await page.waitForFunction(
      (id) =>
        /tile-trouble/.test(
          document.querySelector(`#view-rack .tile[data-station="${id}"]`)?.className ?? '',
        ),
      stationId,
      { timeout: 150_000 },
    );
    await page.waitForTimeout(1200);
    assert.deepEqual(await order(), [healthyId, stationId], 'held while hovered');
    await page.mouse.move(640, 700);
    await page.waitForFunction(
      (id) => document.querySelector('#view-rack .tile')?.getAttribute('data-station') === id,
      stationId,
      { timeout: 5000 },
    );
    assert.deepEqual(await order(), [stationId, healthyId], 'sorted once the pointer left');
    await screenshot(page, 'rack-alarm-active');
  });

  await t.test(
    'on the Runs view: the indicator counts it, the title says it, beep and notification',
    async () => {
      await openViewByKey(page, 'runs');
      const indicator = page.locator('#alarm-indicator');
      await page.waitForFunction(
        () => Number(document.querySelector('#alarm-indicator')?.getAttribute('data-count')) > 0,
      );
      assert.match((await indicator.getAttribute('class')) ?? '', /alarm-indicator-critical/);
      assert.match((await indicator.textContent()) ?? '', /\d+ alarms? \(\d+ critical\)/);
      assert.match(await page.title(), /^\(\d+\) ✖ Critical alarm · Taperline · Runs$/);
      const s = await signals();
      assert.ok(
        s.notifications.some((n) => /Critical: (overtemp|fault-pin) on Sealed box \(demo\)/.test(n.title)),
        JSON.stringify(s.notifications),
      );
      assert.ok(s.tones > 2, `the critical alarm beeped (${s.tones} tones in all)`);
      await indicator.click();
      await page.locator('.alarm-panel-item').first().waitFor();
      await screenshot(page, 'alarm-indicator-runs');
      await page.keyboard.press('Escape');
    },
  );

  await t.test('the indicator stays on the Line feed and Connect views', async () => {
    for (const view of ['feed', 'connect'] as const) {
      await openViewByKey(page, view);
      assert.ok(await page.locator('#alarm-indicator').isVisible());
      assert.match((await page.locator('#alarm-indicator').getAttribute('class')) ?? '', /critical/);
    }
    await screenshot(page, 'alarm-indicator-feed');
  });

  await t.test('Acknowledge all: the count goes to zero and the Rack shows them acknowledged', async () => {
    await page.locator('#alarm-indicator').click();
    await page.locator('#ack-all').click();
    await page.locator('.alarm-panel-status', { hasText: 'acknowledged' }).waitFor({ timeout: 15_000 });
    await page.keyboard.press('Escape');
    await page.waitForFunction(
      () => document.querySelector('#alarm-indicator')?.getAttribute('data-count') === '0',
      undefined,
      { timeout: 15_000 },
    );
    assert.doesNotMatch(await page.title(), /Critical alarm/);
    await openViewByKey(page, 'rack');
    const tile = page.locator(`#view-rack .tile[data-station="${stationId}"]`);
    // Still active but acknowledged: the quiet look, not the loud one (or all cleared by now).
    await page.waitForFunction(
      (id) => {
        const el = document.querySelector(`#view-rack .tile[data-station="${id}"]`);
        return el !== null && !/tile-trouble/.test(el.className) && !el.querySelector('[data-ack="waiting"]');
      },
      stationId,
      { timeout: 15_000 },
    );
    const cls = (await tile.getAttribute('class')) ?? '';
    const line = (await tile.locator('.tile-alarm').textContent()) ?? '';
    if (/tile-acked/.test(cls)) assert.match(line, /Acknowledged: \S+ \((critical|warning), still active\)/);
    assert.match((await tile.getAttribute('aria-label')) ?? '', /acknowledged|no active alarms/);
    await screenshot(page, 'rack-alarm-acknowledged');
  });
});
