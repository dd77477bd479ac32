/**
 * The Sweep view in real Chromium against a real `taperline serve` playing the sweep-trimmer
 * scenario (a person turning a solar charger's input set point): the points appear live, the
 * maximum power point is marked with its voltage and power, and the advice sentence is the one
 * `taperline sweep` prints for the same recorded run. Screenshot: test-results/screenshots/sweep.png.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { openBrowser, screenshot, type BrowserSession } from './helpers/browser';
import { pageUrl, startServe, type ServeHandle } from './helpers/serve';

const BIN = join(process.cwd(), 'bin', 'taperline.cjs');
/** 1800 simulated seconds (one sample a second) in about a minute. */
const SPEEDUP = 30;

const pointCount = async (page: import('playwright-core').Page): Promise<number> => {
  const text = (await page.locator('#sweep-status').textContent()) ?? '';
  const m = /^(\d+) source points/.exec(text);
  return m ? Number(m[1]) : 0;
};

test(
  'Sweep view: live points, the maximum marked, the advice of the CLI',
  { timeout: 240_000 },
  async (t) => {
    const serve: ServeHandle = await startServe([
      '--simulate',
      'sweep-trimmer',
      '--speedup',
      String(SPEEDUP),
    ]);
    let browser: BrowserSession | null = null;
    t.after(async () => {
      await browser?.close();
      await serve.stop();
    });
    browser = await openBrowser();
    const { page } = browser;
    await page.goto(pageUrl(serve, 'sweep'));
    await page.locator('#view-sweep').waitFor({ state: 'visible' });

    await t.test('points appear live', async () => {
      await page.waitForFunction(
        () => /^\d+ source points/.test(document.querySelector('#sweep-status')?.textContent ?? ''),
        null,
        {
          timeout: 30_000,
        },
      );
      const first = await pointCount(page);
      await page.waitForFunction(
        (n) => {
          const m = /^(\d+) source points/.exec(document.querySelector('#sweep-status')?.textContent ?? '');
          return m !== null && Number(m[1]) > n + 20;
        },
        first,
        { timeout: 30_000 },
      );
      assert.ok((await pointCount(page)) > first + 20);
      // The chart draws them: the canvas has been painted (not blank).
      const painted = await page.locator('#sweep-chart').evaluate((c: HTMLCanvasElement) => {
        const ctx = c.getContext('2d');
        if (!ctx) return 0;
        const d = ctx.getImageData(0, 0, c.width, c.height).data;
        let n = 0;
        for (let i = 3; i < d.length; i += 4) if (d[i] > 0) n++;
        return n;
      });
      assert.ok(painted > 1000, `painted pixels ${painted}`);
    });

    await t.test('the maximum power point is marked with its voltage and power', async () => {
      await page
        .locator('#sweep-mpp', { hasText: /Maximum power point: \d+\.\d\d V, \d+\.\d\d W/ })
        .waitFor({ timeout: 90_000 });
      const text = (await page.locator('#sweep-mpp').textContent()) ?? '';
      const [, v, w] = /(\d+\.\d\d) V, (\d+\.\d\d) W/.exec(text) ?? [];
      // The scenario's panel peaks near 16.6 V, 16.5 W at this light and temperature (simulator truth).
      assert.ok(Math.abs(Number(v) - 16.64) < 0.2 && Math.abs(Number(w) - 16.46) < 0.2, text);
      assert.match(
        (await page.locator('#sweep-write').textContent()) ?? '',
        /^Write \d+\.\d\d V into the profile$/,
      );
      assert.match((await page.locator('#sweep-setpoint').textContent()) ?? '', /Profile set point: 18\.4 V/);
      // Mid-sweep: the newest points dark, the older fading, the curve through them.
      await screenshot(page, 'sweep-live');
    });

    await t.test(
      'after the run, the advice sentence matches taperline sweep on the recorded run',
      async () => {
        // The scenario ends after 1800 simulated seconds; then the last analysis has every point.
        await page.waitForFunction(
          () => /^1800 source points/.test(document.querySelector('#sweep-status')?.textContent ?? ''),
          null,
          { timeout: 120_000 },
        );
        const cli = spawnSync(
          process.execPath,
          [BIN, 'sweep', '--db', serve.dbPath, '--run', 'latest', '--json'],
          {
            encoding: 'utf8',
          },
        );
        assert.equal(cli.status, 0, cli.stderr);
        const r = JSON.parse(cli.stdout) as {
          mppV: number;
          mppW: number;
          advice: string;
          operatingV: number;
        };
        const expected = r.advice.charAt(0).toUpperCase() + r.advice.slice(1) + '.';
        await page.locator('#sweep-advice', { hasText: expected }).waitFor({ timeout: 20_000 });
        assert.equal(await page.locator('#sweep-advice').textContent(), expected);
        assert.match(
          expected,
          /^Turn the set point down about \d\.\d V: about \d+ % more power at this light\.$/,
        );
        const mpp = (await page.locator('#sweep-mpp').textContent()) ?? '';
        assert.equal(mpp, `Maximum power point: ${r.mppV.toFixed(2)} V, ${r.mppW.toFixed(2)} W`);
        await screenshot(page, 'sweep');
      },
    );

    await t.test("writing the found voltage into the station's profile", async () => {
      const label = (await page.locator('#sweep-write').textContent()) ?? '';
      const [, v] = /Write (\d+\.\d\d) V/.exec(label) ?? [];
      assert.ok(v, label);
      await page.locator('#sweep-write').click();
      await page.waitForFunction(() =>
        /^(Written|Not written)/.test(document.querySelector('#sweep-write-status')?.textContent ?? ''),
      );
      assert.equal(
        await page.locator('#sweep-write-status').textContent(),
        `Written: the profile's set point is ${v} V (a new run started).`,
      );
      await page
        .locator('#sweep-setpoint', { hasText: `Profile set point: ${Number(v).toFixed(1)} V` })
        .waitFor();
      assert.deepEqual(browser!.errors, []);
    });
  },
);
