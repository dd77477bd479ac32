/**
 * Board checks in the dashboard, against a real `taperline serve` running the simulated board
 * with its sense resistor 20 % low (invented demo board GS, design 1.0 A ±10 %: single-cell
 * linear Li-ion charger ICs' datasheets) in real Chromium: the firmware's `# board=` line names
 * the board, the Bench view's checks panel fills in and fails chargeCurrentA, the Rack tile
 * carries the verdict, a board id typed (as a barcode reader types it, ending with Enter)
 * starts a new run, and the Runs view shows and filters verdicts and boards.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';
import { firstStationId, openViewByKey } from './helpers/page';

test('board checks on a live simulated board', { timeout: 240_000 }, async (t) => {
  // 300 simulated seconds per second: cc starts at once and lasts about 20 s of wall time.
  const serve: ServeHandle = await startServe(['--simulate', 'board-sense-low', '--speedup', '300']);
  let browser: BrowserSession | null = null;
  t.after(async () => {
    await browser?.close();
    await serve.stop();
  });
  browser = await openBrowser();
  const { page } = browser;
  await page.goto(pageUrl(serve, 'rack'));
  const stationId = await firstStationId(page);

  await t.test('the firmware names the board; the checks panel fails chargeCurrentA at 1.25 A', async () => {
    await page.locator(`#view-rack .tile[data-station="${stationId}"]`).click();
    await page.locator('#view-bench').waitFor({ state: 'visible' });
    await page.locator('#view-bench .checks-board[data-board="GS-0002"]').waitFor({ timeout: 30_000 });
    const row = page.locator('#view-bench tr[data-check="chargeCurrentA"].check-fail');
    await row.waitFor({ timeout: 90_000 });
    const measured = Number.parseFloat((await row.locator('td').first().textContent()) ?? '');
    // The model's truth: 0.1 V / (0.8 x 0.1 ohm) = 1.25 A; within 2 %.
    assert.ok(Math.abs(measured - 1.25) / 1.25 < 0.02, `measured ${measured} A`);
    assert.equal(await page.locator('#checks-verdict').getAttribute('data-verdict'), 'fail');
    await page.locator('#view-bench .checks-panel').scrollIntoViewIfNeeded();
    await screenshot(page, 'bench-checks');
  });

  await t.test('the Rack tile carries the verdict', async () => {
    await openViewByKey(page, 'rack');
    const badge = page.locator(`#view-rack .tile[data-station="${stationId}"] .tile-verdict`);
    await badge.waitFor();
    assert.equal(await badge.getAttribute('data-verdict'), 'fail');
    await screenshot(page, 'rack-verdict');
  });

  await t.test('a board id typed and ended with Enter starts a new run for the new board', async () => {
    await openViewByKey(page, 'bench');
    const input = page.locator('#board-id');
    await input.focus();
    await page.keyboard.type('GS-9001');
    await page.keyboard.press('Enter');
    try {
      await page.locator('#view-bench .checks-board[data-board="GS-9001"]').waitFor({ timeout: 15_000 });
    } catch (err) {
      t.diagnostic(
        `status: ${await page.locator('#view-bench .checks-status').textContent()}; board: ${await page.locator('#view-bench .checks-board').textContent()}; input: ${await input.inputValue()}`,
      );
      throw err;
    }
  });

  await t.test('the Runs view shows verdicts and boards and filters by both', async () => {
    await openViewByKey(page, 'runs');
    const rows = page.locator('#view-runs tbody tr[data-run]');
    await rows.nth(1).waitFor({ timeout: 15_000 });
    assert.equal(await rows.count(), 2);
    const first = page.locator('#view-runs tbody tr[data-run]', { hasText: 'GS-0002' });
    assert.equal(await first.locator('.run-verdict').getAttribute('data-verdict'), 'fail');
    assert.match((await first.textContent()) ?? '', /board-changed/);
    assert.equal(await rows.count(), 2);
    await page.selectOption('#runs-verdict-filter', 'fail');
    assert.equal(await rows.count(), 1);
    await page.selectOption('#runs-verdict-filter', '');
    await page.fill('#runs-board-filter', '9001');
    assert.equal(await rows.count(), 1);
    assert.match((await rows.first().textContent()) ?? '', /GS-9001/);
    await page.fill('#runs-board-filter', '');
    // A burn-in batch starts a new run on every station, carrying the batch id.
    await page.fill('#batch-id', 'B1');
    await page.keyboard.press('Enter');
    try {
      await rows.nth(2).waitFor({ timeout: 15_000 });
    } catch (err) {
      t.diagnostic(`status: ${await page.locator('#view-runs .runs-status').textContent()}`);
      throw err;
    }
    assert.match(
      (await page.locator('#view-runs tbody tr[data-run]', { hasText: 'B1' }).textContent()) ?? '',
      /GS-9001/,
    );
    await screenshot(page, 'runs-verdict');
  });
});
