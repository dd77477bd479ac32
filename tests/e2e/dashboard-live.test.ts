/**
 * The dashboard against a real `taperline serve` with a simulated 3S Li-ion station, in real
 * Chromium: the Bench view shows the station reach CC, the Rack view has its tile, keyboard
 * alone reaches every view, the Runs view lists the run and its CSV parses, a bad profile
 * value is refused with the message naming the key, and a chart point can be diagnosed.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { parse } from 'csv-parse/sync';
import { parseProfile } from '@shared/chemistry/profile';
import { CAUSE_CODES } from '@shared/engine/diagnosis/types';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId, openViewByKey } from './helpers/page';

test('dashboard with a live simulated station', { timeout: 240_000 }, async (t) => {
  // 120 simulated seconds per second: the CC part of this 2.5 h scenario lasts about half a minute.
  const serve: ServeHandle = await startServe(['--simulate', 'bench-liion-3s', '--speedup', '120']);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
  });
  browser = await openBrowser();
  const { page } = browser;
  await page.goto(pageUrl(serve, 'rack'));
  const stationId = await firstStationId(page);

  await t.test('the Bench view shows the station reach constant current (cc)', async () => {
    await page.locator(`#view-rack .tile[data-station="${stationId}"]`).click();
    await page.locator('#view-bench').waitFor({ state: 'visible' });
    // Phase code `cc` (docs/codes.md) shown in words.
    const word = page.locator('#view-bench .phase-word[data-phase="cc"]');
    await word.waitFor({ timeout: 60_000 });
    assert.equal(await word.textContent(), 'Constant current');
    assert.match((await page.locator('#view-bench .phase-since').textContent()) ?? '', /^for \d+:\d\d:\d\d$/);
    // Every chart carries its unit on its axis; the phase legend is in words.
    const labels = await page
      .locator('#view-bench canvas[role="img"]')
      .evaluateAll((els) => els.map((e) => e.getAttribute('aria-label') ?? ''));
    for (const unit of [
      'Pack voltage [V]',
      'Charge current [A]',
      'Temperature [°C]',
      'Source voltage [V]',
      'Source power [W]',
    ]) {
      assert.ok(
        labels.some((l) => l.includes(unit)),
        `a chart labelled ${unit}`,
      );
    }
    const legend = await page.locator('#view-bench .phase-legend li').allTextContents();
    assert.deepEqual(legend, [
      'Precondition',
      'Constant current',
      'Constant voltage',
      'Done',
      'Fault',
      'Idle',
    ]);
    // Let a few seconds of trend arrive before the picture.
    await page.waitForTimeout(3000);
    await screenshot(page, 'bench');
  });

  await t.test('the Rack view has a tile with phase, readings and alarm state', async () => {
    await openViewByKey(page, 'rack');
    const tile = page.locator(`#view-rack .tile[data-station="${stationId}"]`);
    const text = (await tile.textContent()) ?? '';
    assert.match(text, /\d+\.\d\d V/);
    assert.match(text, /\d+\.\d\d A/);
    assert.match(text, /°C/);
    assert.match(text, /Ah/);
    assert.match(text, /No active alarms/);
    await screenshot(page, 'rack');
  });

  await t.test('keyboard alone reaches the views and opens a station', async () => {
    for (const view of ['bench', 'runs', 'feed', 'connect', 'diagnosis', 'rack'] as const) {
      await openViewByKey(page, view);
      assert.equal(await page.locator(`.nav-btn[data-view="${view}"]`).getAttribute('aria-current'), 'page');
    }
    // Tab from the top of a freshly loaded page lands on the skip link, then the first view button.
    await page.goto(pageUrl(serve, 'rack'));
    await page.reload();
    await page.locator('#view-rack .tile').first().waitFor();
    await page.keyboard.press('Tab');
    assert.equal(await page.evaluate(() => document.activeElement?.className), 'skip-link');
    await page.keyboard.press('Tab');
    assert.equal(await page.evaluate(() => (document.activeElement as HTMLElement).dataset.view), 'bench');
    await page.keyboard.press('Tab');
    await page.keyboard.press('Enter');
    await page.locator('#view-rack').waitFor({ state: 'visible' });
    // A tile is a real button: focus it and press Enter to open its Bench view.
    await page.locator('#view-rack .tile').first().focus();
    await page.keyboard.press('Enter');
    await page.locator('#view-bench').waitFor({ state: 'visible' });
    // The chart canvases are in the tab order and zoom with + / -.
    const canvas = page.locator('#view-bench canvas[role="img"]').first();
    await canvas.focus();
    const before = await page.locator('#view-bench .window-label').textContent();
    await page.keyboard.press('-');
    await page.waitForFunction(
      (b) => document.querySelector('#view-bench .window-label')?.textContent !== b,
      before,
    );
  });

  await t.test('a marked chart time can be diagnosed', async () => {
    const canvas = page.locator('#view-bench canvas[role="img"]').first();
    const box = (await canvas.boundingBox())!;
    await page.mouse.click(box.x + box.width * 0.5, box.y + box.height / 2);
    const marked = ((await page.locator('#view-bench .pick-text').textContent()) ?? '').replace(
      'Marked ',
      '',
    );
    assert.match(marked, /^\d+:\d\d$/);
    await page.locator('#diagnose-here').click();
    await page.locator('#view-diagnosis').waitFor({ state: 'visible' });
    const title = page.locator('#view-diagnosis .diag-title');
    await title.waitFor({ timeout: 20_000 });
    assert.equal(await title.textContent(), `Diagnosis of station ${stationId} at ${marked} of the run`);
    // A healthy charge may have no cause to name; any cause named is one of docs/codes.md's
    // codes, with its confidence as a number, not only a bar.
    const causes = page.locator('#view-diagnosis .cause');
    for (let i = 0; i < (await causes.count()); i++) {
      const code = await causes.nth(i).getAttribute('data-code');
      assert.ok((CAUSE_CODES as readonly string[]).includes(code ?? ''), `cause ${code}`);
      assert.match(
        (await causes.nth(i).locator('.confidence-text').textContent()) ?? '',
        /^\d{1,3} % confidence$/,
      );
    }
    if ((await causes.count()) === 0)
      assert.equal(
        await page.locator('#view-diagnosis .diag-causes').textContent(),
        'No cause stands out at this time.',
      );
  });

  await t.test('a bad profile value is refused, the message naming the field by its label', async () => {
    await openViewByKey(page, 'connect');
    const field = page.locator('#profile-chargeCurrentA');
    await field.fill('-2');
    const error = page.locator('#profile-chargeCurrentA-err');
    await page.waitForFunction(
      () => (document.querySelector('#profile-chargeCurrentA-err')?.textContent ?? '') !== '',
    );
    // The backend's own refusal (shared/chemistry/profile), with the key replaced by the form's label.
    const expected = parseProfile({
      name: 'garden-sensor 3S Li-ion',
      chemistry: 'li-ion',
      cells: 3,
      capacityAh: 2.5,
      chargeCurrentA: -2,
      terminationA: 0.1,
      timerMin: 240,
      tempWindowC: [0, 45],
    });
    assert.equal(expected.ok, false);
    if (expected.ok) return;
    assert.equal(expected.key, 'chargeCurrentA');
    assert.equal(await error.textContent(), expected.error.replace(/^chargeCurrentA:/, 'Charge current:'));
    assert.equal(await field.getAttribute('aria-invalid'), 'true');
    assert.match(
      (await page.locator('#profile-error').textContent()) ?? '',
      /^Profile refused: Charge current:/,
    );
    await page.locator('#add-station').click();
    await page.waitForFunction(() =>
      /Not added/.test(document.querySelector('#view-connect .connect-status')?.textContent ?? ''),
    );
    // The safety caution is shown where the limits are set.
    assert.match(
      (await page.locator('#view-connect .limits .caution').textContent()) ?? '',
      /fires.*datasheet.*codes/s,
    );
    await page.evaluate(() => window.scrollTo(0, 0));
    await screenshot(page, 'connect-refused');
    await field.fill('1.0');
    await page.waitForFunction(
      () => (document.querySelector('#profile-chargeCurrentA-err')?.textContent ?? 'x') === '',
    );
    // With a valid profile the live preview reads the demo lines, the bad one rejected with its reason.
    const rejectedPreview = page.locator('#view-connect .preview-table tr.preview-rejected');
    await rejectedPreview.first().waitFor({ timeout: 10_000 });
    assert.match((await rejectedPreview.first().textContent()) ?? '', /bad-value/);
    await page.evaluate(() => window.scrollTo(0, 0));
    await screenshot(page, 'connect');
  });

  await t.test('the Runs view lists the run and its CSV download parses', async () => {
    await openViewByKey(page, 'runs');
    const row = page.locator('#view-runs tr[data-run]').first();
    await row.waitFor({ timeout: 15_000 });
    const cells = await row.locator('td').allTextContents();
    assert.ok(cells.some((c) => c.includes(stationId) || c.length > 0));
    assert.match(cells.join(' '), /Ah/);
    await row.locator('button', { hasText: 'CSV' }).click();
    const link = page.locator('#csv-link');
    await link.waitFor();
    const [download] = await Promise.all([page.waitForEvent('download'), link.click()]);
    const path = await download.path();
    const rows = parse(readFileSync(path), { columns: true, skip_empty_lines: true, bom: true }) as Record<
      string,
      string
    >[];
    assert.ok(rows.length > 10, `CSV rows: ${rows.length}`);
    assert.ok(
      'vbat (V)' in rows[0] && 't (s since start)' in rows[0],
      `CSV columns: ${Object.keys(rows[0]).join(', ')}`,
    );
    // ISO 8601 with the zone offset, and the same instant as the receive time in seconds.
    const iso = String(rows[0]['time (ISO 8601)']);
    assert.match(iso, /^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}[+-]\d\d:\d\d$/);
    assert.ok(Math.abs(Date.parse(iso) / 1000 - Number(rows[0]['rx time (s since 1970)'])) < 0.001);
    // A 3S Li-ion pack between precondition and full charge: 3 x 2.5..4.3 V/cell
    // (Battery University BU-409: regulation 4.20 V/cell; ElectroDragon wiki: precondition below about 3.0 V/cell).
    const vbat = rows.map((r) => Number(r['vbat (V)'])).filter(Number.isFinite);
    assert.ok(
      vbat.length > 10 && vbat.every((v) => v > 7.5 && v < 12.9),
      `vbat in range (${Math.min(...vbat)}..${Math.max(...vbat)})`,
    );
    await screenshot(page, 'runs');
  });

  await t.test('the Run report is offered as a download of a self-contained page', async () => {
    const row = page.locator('#view-runs tr[data-run]').first();
    await row.locator('button', { hasText: 'Report' }).click();
    const link = page.locator('#report-link');
    await link.waitFor({ timeout: 30_000 });
    const href = new URL((await link.getAttribute('href'))!, serve.url).toString();
    const response = await page.request.get(href, { timeout: 60_000 });
    assert.equal(response.status(), 200);
    assert.match(response.headers()['content-type'] ?? '', /text\/html/);
    assert.match(await response.text(), /<html/i);
  });

  await t.test('a run still recording is not deleted, and says why', async () => {
    const row = page.locator('#view-runs tr[data-run]').first();
    const runId = await row.getAttribute('data-run');
    await row.locator('button', { hasText: 'Delete…' }).click();
    await row.locator('button', { hasText: 'Yes, delete' }).click();
    await page.waitForFunction(
      (id) =>
        /was not deleted/.test(document.querySelector('#view-runs .runs-status')?.textContent ?? '') &&
        document.querySelector(`#view-runs tr[data-run="${id}"]`) !== null,
      runId,
    );
    assert.match((await page.locator('#view-runs .runs-status').textContent()) ?? '', /still recording/);
  });

  await t.test('a recorded run opens in the Bench view from its overview', async () => {
    const row = page.locator('#view-runs tr[data-run]').first();
    const runId = await row.getAttribute('data-run');
    await row.locator('button', { hasText: 'Open' }).click();
    await page.locator('#view-bench .run-title').waitFor({ timeout: 15_000 });
    assert.match(
      (await page.locator('#view-bench .run-title').textContent()) ?? '',
      new RegExp(`^Run ${runId} `),
    );
    // Zoom in with the buttons: the window narrows and finer data is fetched for it.
    const label = page.locator('#view-bench .window-label');
    const before = await label.textContent();
    await page.locator('#view-bench button[aria-label="Zoom in"]').click();
    await page.waitForFunction(
      (b) => document.querySelector('#view-bench .window-label')?.textContent !== b,
      before,
    );
    await page.waitForTimeout(800);
    await screenshot(page, 'bench-run');
  });

  await t.test('a recorded run replays as a new station', async () => {
    await openViewByKey(page, 'runs');
    await page.locator('#replay-speed').selectOption({ label: 'As fast as possible' });
    const row = page.locator('#view-runs tr[data-run]').first();
    await row.locator('button', { hasText: 'Replay' }).click();
    await page.locator('#view-bench').waitFor({ state: 'visible', timeout: 15_000 });
    const selected = await page.locator('#bench-station').inputValue();
    assert.notEqual(selected, stationId, 'the Bench view shows the replay station');
    await page.locator('#view-bench .phase-word').waitFor({ timeout: 15_000 });
  });

  assert.deepEqual(
    browser.errors.filter((e) => /Content Security Policy|Refused to/.test(e)),
    [],
    'no CSP violation in the page',
  );
});
