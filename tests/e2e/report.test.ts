/**
 * The Run report in a real Chromium (playwright-core): every section is there, each chart
 * canvas drew something, the page makes no request beyond its own file, and it prints to a
 * PDF of at least one page. A screenshot is kept in test-results/report.png.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { parseProfile } from '@shared/chemistry/profile';
import { getScenario, simulatedLines } from '../../main/simulator';
import { buildRunReport, CHROMIUM_ARGS, renderReportPdf, reportInputOf } from '../../main/report';
import { RunCollector } from '../../main/report/collect-run';
import { PHASE_BANDS_PLUGIN_ID } from '../../renderer/charts/phase-bands-plugin';

const CHROMIUM = '/usr/bin/chromium';
const SECTIONS = [
  'report-title',
  'caution',
  'profile',
  'timeline',
  'metrics',
  'charts',
  'alarms',
  'gaps',
  'diagnosis',
  'report-footer',
];

/** The weak-panel-timer demo: a solar source, a timer fault, alarms, all four chart quantities. */
function reportHtml(): string {
  const scenario = getScenario('weak-panel-timer');
  const parsed = parseProfile(scenario.profile);
  assert.ok(parsed.ok);
  const collector = new RunCollector(parsed.profile);
  let rxS = 0;
  for (const line of simulatedLines(scenario.name, { shape: 'kv', sampleIntervalS: 1, seed: 3 }))
    collector.push(line, rxS++, false);
  const run = collector.finish();
  return buildRunReport(
    reportInputOf(run, 'Run report: fence-monitor 4S LiFePO4 (demo)', 'simulator weak-panel-timer'),
  );
}

test(
  'the Run report renders in Chromium, draws its charts and prints to PDF',
  { skip: !existsSync(CHROMIUM) && 'no /usr/bin/chromium' },
  async (t) => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-report-'));
    t.after(() => rmSync(dir, { recursive: true, force: true }));
    const htmlPath = join(dir, 'report.html');
    writeFileSync(htmlPath, reportHtml());
    const fileUrl = pathToFileURL(htmlPath).href;

    const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    t.after(() => browser.close());
    const page = await browser.newPage({ viewport: { width: 1100, height: 900 } });
    const requests: string[] = [];
    page.on('request', (r) => requests.push(r.url()));
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(fileUrl, { waitUntil: 'load' });
    await page.waitForFunction(() => document.body.hasAttribute('data-charts-drawn'));
    assert.deepEqual(errors, [], 'no script error on the page');
    assert.deepEqual(requests, [fileUrl], 'self-contained: no request beyond the file itself');
    // The charts were drawn by the dashboard's chart modules (dist/report-charts.js, inlined).
    assert.equal(await page.locator('body').getAttribute('data-chart-module'), PHASE_BANDS_PLUGIN_ID);
    const inlined = await page
      .locator('script:not([type])')
      .evaluateAll((els) => els.map((e) => e.textContent));
    assert.deepEqual(inlined, [readFileSync(join('dist', 'report-charts.js'), 'utf8')]);

    for (const id of SECTIONS) assert.equal(await page.locator(`#${id}`).count(), 1, `section #${id} exists`);
    assert.match((await page.locator('#caution').innerText()).toLowerCase(), /fire/);
    assert.ok((await page.locator('#timeline .seg').count()) >= 2, 'phase timeline has labelled segments');
    assert.match(await page.locator('#timeline').innerText(), /cc/);
    assert.ok((await page.locator('#alarms tbody tr').count()) >= 1, 'alarms table lists the alarms');
    assert.match(await page.locator('#diagnosis').innerText(), /weak-source/);
    assert.match(await page.locator('#report-footer').innerText(), /Taperline \d+\.\d+\.\d+/);

    const canvases = await page.locator('canvas').evaluateAll((els) =>
      els.map((el) => {
        const c = el as HTMLCanvasElement;
        const data = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
        let inked = 0;
        for (let i = 3; i < data.length; i += 4) if (data[i] > 0) inked++;
        return { id: c.id, inked, total: c.width * c.height };
      }),
    );
    assert.deepEqual(
      canvases.map((c) => c.id).sort(),
      ['chart-current', 'chart-source', 'chart-temperature', 'chart-voltage'],
      'one chart per physical quantity',
    );
    for (const c of canvases)
      assert.ok(c.inked > c.total * 0.01, `${c.id} drew something (${c.inked} of ${c.total} pixels)`);

    mkdirSync('test-results', { recursive: true });
    await page.screenshot({ path: join('test-results', 'report.png'), fullPage: true });
    assert.ok(existsSync(join('test-results', 'report.png')));

    const pdfPath = join(dir, 'report.pdf');
    await renderReportPdf(htmlPath, pdfPath);
    const pdf = readFileSync(pdfPath).toString('latin1');
    assert.ok(pdf.startsWith('%PDF-'), 'a PDF file');
    const pages = (pdf.match(/\/Type\s*\/Page(?![s\w])/g) ?? []).length;
    assert.ok(pages >= 1, `the PDF has at least one page (found ${pages})`);
    const images = (pdf.match(/\/Subtype\s*\/Image/g) ?? []).length;
    assert.ok(images >= 4, `the four chart canvases print as images (found ${images} images)`);
    t.diagnostic(`report PDF: ${pages} page(s), ${images} image(s), ${pdf.length} bytes`);
  },
);
