/**
 * Connect & profile in real Chromium at 1280×720 against a real `taperline serve`: a serial
 * path typed by hand (one end of a socat pty pair, as a test rig or a by-id link would be),
 * a charge window with one bound typed, a refusal worded with the field's label, warnings on
 * unusual values with the safety caution, the safety timer's note on the LiFePO4 preset, and
 * the board's design values (one bound alone warned and refused, both taken into the profile).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, openSync, rmSync, writeSync, closeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { openViewByKey } from './helpers/page';
import { ptyPair } from '../integration/serial-pty';

test('a typed serial path and a checked profile', { timeout: 180_000 }, async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-connect-'));
  const pty = ptyPair(join(dir, 'charger'), join(dir, 'bench-port'));
  await pty.start();
  const serve: ServeHandle = await startServe([]);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
    await pty.stop();
    rmSync(dir, { recursive: true, force: true });
  });
  browser = await openBrowser({ width: 1280, height: 720 });
  const { page } = browser;
  await page.goto(pageUrl(serve, 'connect'));
  await openViewByKey(page, 'connect');

  await t.test('the LiFePO4 preset says why the timer is empty, and offers a starting value', async () => {
    await page.locator('#profile-preset').selectOption({ label: 'LiFePO4 (chemistry defaults)' });
    const hint = page.locator('#profile-timer-hint');
    assert.match((await hint.textContent()) ?? '', /Safety timer: no default, because/);
    await page.locator('#profile-capacityAh').fill('6');
    await page.locator('#profile-chargeCurrentA').fill('2');
    // 1.5 × 6 Ah ÷ 2 A = 270 min (common practice).
    await page.locator('#profile-timer-hint', { hasText: '= 270 min' }).waitFor();
  });

  await t.test('unusual values are warned, with the safety caution', async () => {
    await page.locator('#profile-cells').fill('40');
    await page.locator('#profile-chargeCurrentA').fill('20');
    const warnings = page.locator('#profile-warnings');
    await warnings.locator('.profile-warning', { hasText: '40 cells in series' }).waitFor();
    await warnings.locator('.profile-warning', { hasText: '20 A on a 6 Ah pack is 3.3C' }).waitFor();
    assert.match((await warnings.textContent()) ?? '', /cell maker’s datasheet/);
    await warnings.scrollIntoViewIfNeeded();
    await screenshot(page, 'connect-profile-warnings');
    await page.locator('#profile-cells').fill('4');
    await page.locator('#profile-chargeCurrentA').fill('2');
    await page.waitForFunction(() => document.querySelector('#profile-warnings')?.hasAttribute('hidden'));
  });

  await t.test('one bound of the charge window typed: the other is the chemistry default', async () => {
    await page.locator('#profile-tempWindowC-1').fill('40');
    await page.waitForTimeout(800);
    assert.equal(await page.locator('#profile-error').isHidden(), true, 'no refusal');
  });

  await t.test('a refusal names the field label, not the JSON key', async () => {
    await page.locator('#profile-tempWindowC-1').fill('forty');
    const error = page.locator('#profile-error');
    await error.waitFor({ state: 'visible' });
    const text = (await error.textContent()) ?? '';
    assert.match(text, /^Profile refused: Charge window/);
    assert.doesNotMatch(text, /tempWindowC/);
    await page.locator('#profile-tempWindowC-1').fill('40');
    await error.waitFor({ state: 'hidden' });
  });

  await t.test(
    'design values: one bound alone is warned and refused by its label; both are taken',
    async () => {
      await page.locator('#profile-expect-chargeCurrentA-min').fill('1.8');
      const warnings = page.locator('#profile-warnings');
      await warnings
        .locator('.profile-warning', { hasText: 'Design value Charge current (CC level): only the lowest' })
        .waitFor();
      const error = page.locator('#profile-error');
      await error.waitFor({ state: 'visible' });
      assert.match(
        (await error.textContent()) ?? '',
        /^Profile refused: Design value Charge current \(CC level\), highest/,
      );
      assert.equal(
        await page.locator('#profile-expect-chargeCurrentA-max').getAttribute('aria-invalid'),
        'true',
      );
      await page.locator('#profile-expect-chargeCurrentA-max').fill('2.2');
      await error.waitFor({ state: 'hidden' });
      await page.waitForFunction(() => document.querySelector('#profile-warnings')?.hasAttribute('hidden'));
      await page.locator('fieldset.design-values').scrollIntoViewIfNeeded();
      await screenshot(page, 'connect-design-values');
    },
  );

  await t.test('a typed pty path becomes a station that reads lines', async () => {
    await page.locator('#source-kind-serial').check();
    await page.locator('#serial-path').fill(pty.host);
    await page.locator('#station-id').fill('pty-bench');
    await page.locator('#add-station').click();
    await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
    // Invented demo lines: a weather station's 4S LiFePO4 pack in CC.
    const fd = openSync(pty.device, 'w');
    for (let i = 0; i < 5; i++) writeSync(fd, `t=${i} vbat=13.${20 + i} ibat=1.95 temp=24.${i}\n`);
    closeSync(fd);
    await page.waitForFunction(
      () => /13\.2\d\d V/.test(document.querySelector('#view-bench .readouts')?.textContent ?? ''),
      undefined,
      { timeout: 15_000 },
    );
    assert.match(
      (await page.locator('#view-bench .source-state').textContent()) ?? '',
      /bench-port.*open|open/,
    );
    // The design values typed above travel with the station's profile: its checks panel
    // judges the charge current against 1.8–2.2 A.
    const check = page.locator('#view-bench tr[data-check="chargeCurrentA"]');
    await check.waitFor({ timeout: 30_000 });
    assert.match((await check.locator('td').nth(1).textContent()) ?? '', /^1\.8–2\.2$/);
    await screenshot(page, 'connect-typed-path-bench');
  });
});
