/** Real Chromium for the renderer tests (playwright-core, the Debian chromium binary). */
import { mkdtempSync, rmSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

import { CHROMIUM_ARGS, findChromium } from '../../../main/report/pdf';

/** The same Chromium and flags the report printer uses (Debian's chromium on these machines). */
export const CHROMIUM_PATH = findChromium() ?? '/usr/bin/chromium';
export { CHROMIUM_ARGS };

export interface BrowserSession {
  context: BrowserContext;
  page: Page;
  /** Console errors and page errors seen so far (a CSP violation shows up here). */
  errors: string[];
  close(): Promise<void>;
}

/** A fresh Chromium with its own user data dir, removed on close. */
export async function openBrowser(viewport = { width: 1440, height: 900 }): Promise<BrowserSession> {
  const userDataDir = mkdtempSync(join(tmpdir(), 'taperline-chromium-'));
  const context = await chromium.launchPersistentContext(userDataDir, {
    executablePath: CHROMIUM_PATH,
    args: CHROMIUM_ARGS,
    headless: true,
    viewport,
    acceptDownloads: true,
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const errors: string[] = [];
  page.on('console', (msg) => {
    if (msg.type() === 'error') errors.push(msg.text());
  });
  page.on('pageerror', (err) => errors.push(String(err)));
  return {
    context,
    page,
    errors,
    async close() {
      await context.close();
      rmSync(userDataDir, { recursive: true, force: true });
    },
  };
}

export const SCREENSHOT_DIR = join(process.cwd(), 'test-results', 'screenshots');

export async function screenshot(page: Page, view: string): Promise<string> {
  mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const path = join(SCREENSHOT_DIR, `${view}.png`);
  await page.screenshot({ path, fullPage: false });
  return path;
}
