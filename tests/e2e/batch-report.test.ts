/**
 * The Batch report of a 16-board burn-in (simulated boards, invented parts) in a real Chromium
 * (playwright-core): the yield, one row per board, one strip plot per measured value with the
 * design limits, no request beyond its own file. Screenshot: test-results/screenshots/batch-report.png.
 * Then the same report as the app offers it: a batch recorded into the database of a real
 * `taperline serve`, saved from the Runs view and opened.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { parseProfile } from '@shared/chemistry/profile';
import { createTelemetryRun } from '../../main/simulator';
import { batchBoards, truthInSpec } from '../../main/simulator/board-scenarios';
import { CHROMIUM_ARGS } from '../../main/report';
import { RunCollector } from '../../main/report/collect-run';
import { judgeRun, summarizeBatch } from '../../main/report/judge-run';
import { buildBatchReportHtml } from '../../main/report/batch';
import { recordBatch } from '../integration/batch-fixture';
import { screenshot } from './helpers/browser';
import { pageUrl, startServe } from './helpers/serve';

const CHROMIUM = '/usr/bin/chromium';

function batchHtml(): { html: string; expectedPass: number; keys: number } {
  // Seed 7 of the invented lot: 12 of 16 boards in spec by the model's truth.
  const boards = batchBoards(16, 7);
  const judged = boards.map((board) => {
    const parsed = parseProfile(board.profile);
    assert.ok(parsed.ok);
    const collector = new RunCollector(parsed.profile);
    for (const line of createTelemetryRun(board, { shape: 'kv', sampleIntervalS: 5 }).lines())
      collector.push(line.text, line.simS, false);
    const run = collector.finish();
    return judgeRun(run, { ...run.identity, operator: 'demo operator', batch: 'B7' }, board.name);
  });
  const summary = summarizeBatch(judged);
  return {
    html: buildBatchReportHtml(judged, summary, 'Batch B7: garden-sensor charger boards (demo)'),
    expectedPass: boards.filter((b) => truthInSpec(b.truth)).length,
    keys: judged[0].report.checks.filter((c) => c.measured !== null).length,
  };
}

test(
  'the Batch report renders in Chromium: yield, one row per board, a strip plot per measured value',
  { skip: !existsSync(CHROMIUM) && 'no /usr/bin/chromium' },
  async (t) => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-batch-report-'));
    t.after(() => rmSync(dir, { recursive: true, force: true }));
    const { html, expectedPass, keys } = batchHtml();
    // The Run report's policy: only scripts carrying this page's nonce run (the charts
    // drawing below proves they do), never an inline script without it.
    const nonce = /script-src 'nonce-([A-Za-z0-9+/=]+)'/.exec(html)?.[1];
    assert.ok(nonce, 'script-src allows one nonce');
    assert.doesNotMatch(html, /script-src[^;"]*'unsafe-inline'/);
    for (const [, attrs] of html.matchAll(/<script([^>]*)>/g))
      assert.ok(attrs.includes(`nonce="${nonce}"`) || attrs.includes('type="application/json"'), attrs);
    const htmlPath = join(dir, 'batch.html');
    writeFileSync(htmlPath, html);
    const fileUrl = pathToFileURL(htmlPath).href;

    const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    t.after(() => browser.close());
    const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
    const requests: string[] = [];
    page.on('request', (r) => requests.push(r.url()));
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(fileUrl, { waitUntil: 'load' });
    await page.waitForFunction(() => document.body.hasAttribute('data-charts-ready'));
    assert.deepEqual(errors, []);
    assert.deepEqual(requests, [fileUrl], 'self-contained');

    assert.match(
      await page.locator('#batch-yield').innerText(),
      new RegExp(
        `Yield ${Math.round((1000 * expectedPass) / 16) / 10} %: ${expectedPass} pass, ${16 - expectedPass} fail`,
      ),
    );
    assert.equal(await page.locator('#batch-boards tbody tr').count(), 16);
    assert.equal((await page.locator('#batch-boards .v-fail').count()) >= 16 - expectedPass, true);
    const canvases = await page.locator('#batch-spread canvas').evaluateAll((els) =>
      els.map((el) => {
        const c = el as HTMLCanvasElement;
        const data = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
        let inked = 0;
        for (let i = 3; i < data.length; i += 4) if (data[i] > 0) inked++;
        return { id: c.id, inked, total: c.width * c.height };
      }),
    );
    assert.equal(canvases.length, keys, 'one strip plot per measured value');
    for (const c of canvases) assert.ok(c.inked > c.total * 0.01, `${c.id} drew (${c.inked} px)`);

    mkdirSync(join('test-results', 'screenshots'), { recursive: true });
    const shot = join('test-results', 'screenshots', 'batch-report.png');
    await page.screenshot({ path: shot, fullPage: true });
    assert.ok(existsSync(shot));
  },
);

test(
  'the Runs view saves the Batch report of a recorded batch: choose the batch, download, open it',
  { skip: !existsSync(CHROMIUM) && 'no /usr/bin/chromium', timeout: 120_000 },
  async (t) => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-batch-app-'));
    // Six boards of the same invented lot, recorded as stations of a batch would record them.
    const boards = batchBoards(6, 7);
    recordBatch(join(dir, 'runs.sqlite'), boards, 'B7', 2);
    const serve = await startServe([], { dir });
    t.after(() => serve.stop());
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    t.after(() => browser.close());
    const page = await browser.newPage({ viewport: { width: 1440, height: 900 } });
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(pageUrl(serve, 'runs'));
    await page.locator('#view-runs tr[data-run]').first().waitFor({ timeout: 30_000 });
    assert.equal(await page.locator('#batch-report-id').inputValue(), 'B7');
    await page.locator('#batch-report').click();
    const link = page.locator('#batch-report-link');
    await link.waitFor({ timeout: 60_000 });
    assert.match((await link.textContent()) ?? '', /Batch report of batch B7/);
    assert.equal(await link.getAttribute('download'), 'taperline-batch-B7.html');
    await screenshot(page, 'runs-batch-report');

    // The download opens as the self-contained report, its charts drawn under its own policy.
    const href = new URL((await link.getAttribute('href'))!, serve.url).toString();
    const report = await browser.newPage({ viewport: { width: 1200, height: 900 } });
    report.on('pageerror', (e) => errors.push(e.message));
    await report.goto(href);
    await report.waitForFunction(() => document.body.hasAttribute('data-charts-ready'), undefined, {
      timeout: 30_000,
    });
    const expectedPass = boards.filter((b) => truthInSpec(b.truth)).length;
    assert.match(await report.locator('#batch-yield').innerText(), new RegExp(`${expectedPass} pass`));
    assert.equal(await report.locator('#batch-boards tbody tr').count(), 6);
    assert.deepEqual(errors, []);
    await screenshot(report, 'batch-report-from-app');

    await page.locator('#batch-csv').click();
    const csvLink = page.locator('#batch-csv-link');
    await csvLink.waitFor({ timeout: 60_000 });
    const csv = await page.request.get(new URL((await csvLink.getAttribute('href'))!, serve.url).toString());
    assert.equal(csv.status(), 200);
    assert.equal((await csv.text()).trim().split('\n').length, 7);
  },
);
