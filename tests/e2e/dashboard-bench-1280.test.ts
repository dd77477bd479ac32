/**
 * The Bench view at 1280×720 in real Chromium against a real `taperline serve`: all four charts
 * and the navigation in the window, the charge outlook during CC (charge level and time to full
 * as ranges, "CV at 12.60 V in …"), a crosshair readout of every chart at the pointer, minimum
 * axis spans, and at Done no "0:00:00 (CC 0:00:00 + CV 0:00:00)". Lead-acid says bulk/absorption.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import type { Page } from 'playwright-core';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId } from './helpers/page';

async function metricText(page: Page, label: string): Promise<string> {
  return page.evaluate((l) => {
    const dt = [...document.querySelectorAll('#view-bench .metrics dt')].find((d) => d.textContent === l);
    return dt?.nextElementSibling?.textContent ?? '';
  }, label);
}

async function openBench(serveArgs: string[], t: { after(fn: () => Promise<void>): void }) {
  const serve: ServeHandle = await startServe(serveArgs);
  const browser: BrowserSession = await openBrowser({ width: 1280, height: 720 });
  t.after(async () => {
    await browser.close();
    await serve.stop();
  });
  const { page } = browser;
  await page.goto(pageUrl(serve, 'rack'));
  const id = await firstStationId(page);
  await page.locator(`#view-rack .tile[data-station="${id}"]`).click();
  await page.locator('#view-bench canvas[data-quantity="source"]').waitFor();
  return page;
}

test('Bench at 1280×720 during CC: outlook, crosshair, spans, fit', { timeout: 180_000 }, async (t) => {
  // The demo garden-sensor pack starts at 30 % and spends about 20 min in CC: at 20x, a minute.
  const page = await openBench(['--simulate', 'bench-liion-3s', '--speedup', '20'], t);
  await page.waitForFunction(
    () => document.querySelector('#view-bench .phase-word')?.getAttribute('data-phase') === 'cc',
  );
  // A few simulated minutes of CC so the voltage's rise rate is measured.
  await page.waitForFunction(
    () => {
      const dt = [...document.querySelectorAll('#view-bench .metrics dt')].find(
        (d) => d.textContent === 'Next',
      );
      return /in (about|\d)/.test(dt?.nextElementSibling?.textContent ?? '');
    },
    undefined,
    { timeout: 60_000 },
  );

  await t.test('the outlook says what comes next, with ranges', async () => {
    // 3S Li-ion: CV at 3 × 4.20 V = 12.60 V (Battery University BU-409, 4.20 V/cell).
    assert.match(await metricText(page, 'Next'), /^CV at 12\.60 V in (about \d+ min|\d+ min – \d+)/);
    assert.match(await metricText(page, 'Charge level (est.)'), /^(about \d+|\d+–\d+) %$/);
    assert.match(await metricText(page, 'Time to full (est.)'), /^(about|\d)/);
    assert.doesNotMatch(await page.locator('#view-bench .metrics').innerText(), /0:00:00/);
  });

  await t.test('all four charts and the navigation fit the window', async () => {
    const boxes = await page
      .locator('#view-bench canvas[data-quantity]')
      .evaluateAll((els) => els.map((e) => e.getBoundingClientRect().bottom));
    assert.equal(boxes.length, 4);
    for (const bottom of boxes) assert.ok(bottom <= 720, `a chart ends at ${bottom} px`);
    await page.mouse.wheel(0, 2000);
    const nav = await page.locator('.topbar').boundingBox();
    assert.ok(nav && nav.y >= 0 && nav.y < 5, 'the top bar stays in view');
  });

  await t.test('axes keep a minimum span: 5 % of the 1 A charge current, 1 °C', async () => {
    const span = (q: string) =>
      page
        .locator(`#view-bench canvas[data-quantity="${q}"]`)
        .evaluate((c) => Number((c as HTMLElement).dataset.yMax) - Number((c as HTMLElement).dataset.yMin));
    assert.ok((await span('ibat')) >= 0.05 - 1e-9);
    assert.ok((await span('temp')) >= 1 - 1e-9);
    // 1 % of 12.60 V.
    assert.ok((await span('vbat')) >= 0.126 - 1e-9);
  });

  await t.test('the crosshair reads every chart at the pointer time', async () => {
    // The whole run so far fills the window, so the middle of a chart holds data.
    await page.locator('#view-bench button[aria-label="Show the whole run"]').click();
    await page.waitForTimeout(300);
    const box = (await page.locator('#view-bench canvas[data-quantity="ibat"]').boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height / 2);
    const readout = page.locator('#view-bench .cursor-readout');
    await readout.locator('.readout-time', { hasText: /^At \d+:\d\d$/ }).waitFor();
    const fields = await readout
      .locator('.readout-item')
      .evaluateAll((els) =>
        els.map((e) => [e.getAttribute('data-field'), e.querySelector('strong')?.textContent]),
      );
    assert.deepEqual(
      fields.map((f) => f[0]),
      ['vbatV', 'ibatA', 'tempC', 'vinV', 'powerW'],
    );
    assert.match(
      String(fields[0][1]),
      /^\d+\.\d{3} V$/,
      `${await readout.innerText()} | ${await page.locator('#view-bench .window-label').innerText()}`,
    );
    assert.match(String(fields[1][1]), /^\d\.\d{3} A$/);
    await screenshot(page, 'bench-1280-cc-crosshair');
    // Clicking marks the time; the readout then shows the marked values after the pointer leaves.
    await page.mouse.click(box.x + box.width * 0.5, box.y + box.height / 2);
    await page.mouse.move(5, 400);
    await readout.locator('.readout-time', { hasText: /^Marked / }).waitFor();
  });

  await t.test('from the marked time, the raw lines around it in the Line feed', async () => {
    await page.locator('#lines-here').click();
    await page.locator('#view-feed').waitFor({ state: 'visible' });
    const focus = page.locator('#view-feed .feed-row.feed-focus');
    await focus.waitFor();
    assert.ok(
      (await page.locator('#view-feed .feed-row.feed-around').count()) >= 3,
      'a few seconds of lines',
    );
    assert.match(
      (await page.locator('.feed-around-note').textContent()) ?? '',
      /^Lines around \d+:\d\d:\d\d .*paused/,
    );
    assert.equal(await page.locator('#feed-pause').getAttribute('aria-pressed'), 'true');
    await screenshot(page, 'feed-around-mark');
  });
});

test(
  'Bench at Done and for lead-acid: no zero clocks, bulk / absorption words',
  { timeout: 180_000 },
  async (t) => {
    await t.test('Done: full, nothing next', async (tt) => {
      const page = await openBench(['--simulate', 'bench-liion-3s', '--speedup', '1200'], tt);
      await page.waitForFunction(
        () => document.querySelector('#view-bench .phase-word')?.getAttribute('data-phase') === 'done',
        undefined,
        { timeout: 60_000 },
      );
      await page.waitForTimeout(600);
      assert.match(await metricText(page, 'Time to full (est.)'), /^Full for /);
      assert.equal(await metricText(page, 'Next'), 'Nothing: the charge has ended');
      assert.doesNotMatch(await page.locator('#view-bench .metrics').innerText(), /0:00:00 \(CC/);
      await screenshot(page, 'bench-1280-done');
    });
    await t.test('lead-acid: bulk, then absorption at its voltage', async (tt) => {
      const page = await openBench(['--simulate', 'lead-acid-float', '--speedup', '60'], tt);
      await page.waitForFunction(
        () =>
          /Bulk|Absorption|Float/.test(document.querySelector('#view-bench .phase-word')?.textContent ?? ''),
        undefined,
        { timeout: 60_000 },
      );
      const phase = (await page.locator('#view-bench .phase-word').textContent()) ?? '';
      if (/Bulk/.test(phase)) {
        await page.waitForFunction(
          () => {
            const dt = [...document.querySelectorAll('#view-bench .metrics dt')].find(
              (d) => d.textContent === 'Next',
            );
            return /^Absorption at \d+\.\d\d V/.test(dt?.nextElementSibling?.textContent ?? '');
          },
          undefined,
          { timeout: 60_000 },
        );
      }
      assert.doesNotMatch(await page.locator('#view-bench .metrics').innerText(), /\bCV\b|\bCC\b/);
      await screenshot(page, 'bench-1280-lead-acid');
    });
  },
);
