/**
 * The desktop app driven by Playwright's Electron support: the window, the bridge, the
 * backend child and a simulated station. Needs the Electron binary, which `npm install`
 * does not fetch here (no network); without it the test is skipped and says why.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { _electron as electron } from 'playwright-core';

const root = join(__dirname, '..', '..');

function electronBinary(): { path: string | null; why: string } {
  try {
    // The electron package's main export is the binary's path; it throws when never downloaded.
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const path = require('electron') as unknown as string;
    return existsSync(path) ? { path, why: '' } : { path: null, why: `${path} does not exist` };
  } catch (err) {
    return { path: null, why: (err as Error).message };
  }
}

const binary = electronBinary();
const bundle = join(root, 'dist', 'electron-main.cjs');
const skipReason = !binary.path
  ? `Electron binary not installed on this machine: ${binary.why}`
  : !existsSync(bundle)
    ? `the app is not built (no ${bundle}): run npm run build`
    : false;
if (skipReason) console.log(skipReason);

test(
  'the desktop window shows the app over its own protocol with a live simulated station',
  { skip: skipReason },
  async () => {
    const userData = mkdtempSync(join(tmpdir(), 'taperline-electron-e2e-'));
    const app = await electron.launch({
      executablePath: binary.path!,
      args: [
        bundle,
        `--user-data-dir=${userData}`,
        '--simulate',
        'bench-liion-3s',
        '--speedup',
        '60',
        '--no-record',
      ],
      env: { ...process.env, TAPERLINE_NODE: process.execPath },
      cwd: root,
    });
    try {
      const page = await app.firstWindow();
      await page.waitForLoadState('domcontentloaded');
      assert.match(page.url(), /^taperline:\/\/app\//);
      // No Node in the page; only the two bridge functions.
      assert.equal(
        await page.evaluate(() => typeof (globalThis as { require?: unknown }).require),
        'undefined',
      );
      assert.deepEqual(
        await page.evaluate(() => Object.keys((window as unknown as { taperline: object }).taperline).sort()),
        ['onPush', 'request'],
      );
      const stations = await page.evaluate(async () => {
        const bridge = (
          window as unknown as { taperline: { request(m: string, p?: unknown): Promise<unknown> } }
        ).taperline;
        const deadline = Date.now() + 15_000;
        for (;;) {
          const list = (await bridge.request('stations.list')) as { id: string }[];
          if (list.length > 0 || Date.now() > deadline) return list.map((s) => s.id);
          await new Promise((r) => setTimeout(r, 200));
        }
      });
      assert.equal(stations.length, 1);
      const gotSamples = await page.evaluate(
        () =>
          new Promise<boolean>((resolve) => {
            const bridge = (
              window as unknown as { taperline: { onPush(cb: (p: { push: string }) => void): () => void } }
            ).taperline;
            const timer = setTimeout(() => resolve(false), 15_000);
            const stop = bridge.onPush((p) => {
              if (p.push !== 'samples') return;
              clearTimeout(timer);
              stop();
              resolve(true);
            });
          }),
      );
      assert.equal(gotSamples, true);
      const refused = await page.evaluate(async () => {
        const bridge = (
          window as unknown as { taperline: { request(m: string, p?: unknown): Promise<unknown> } }
        ).taperline;
        try {
          await bridge.request('stations.remove', { stationId: 'no such station!' });
          return '';
        } catch (err) {
          return (err as Error).message;
        }
      });
      assert.match(refused, /stationId/);
      // Navigation away from the app is refused.
      await page.evaluate(() => {
        window.location.href = 'https://example.invalid/';
      });
      await new Promise((r) => setTimeout(r, 500));
      assert.match(page.url(), /^taperline:\/\/app\//);
    } finally {
      await app.close();
      rmSync(userData, { recursive: true, force: true });
    }
  },
);
