/**
 * Prints a Run report HTML file to PDF with headless Chromium (playwright-core). The Electron
 * app prints with its own printToPDF; this is for the CLI and the headless server.
 */
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

/** Raised when no Chromium can be found or started; the message says what to install. */
export class NoChromiumError extends Error {
  override name = 'NoChromiumError';
}

/** The Chromium to use: $TAPERLINE_CHROMIUM, the Debian/Ubuntu package, or null. */
export function findChromium(env: NodeJS.ProcessEnv = process.env): string | null {
  const candidates = [
    env.TAPERLINE_CHROMIUM,
    '/usr/bin/chromium',
    '/usr/bin/chromium-browser',
    '/usr/bin/google-chrome',
  ];
  for (const c of candidates) if (c && existsSync(c)) return c;
  return null;
}

export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export interface PdfOptions {
  /** A Chromium to use instead of the one found on this machine. */
  executablePath?: string;
}

export async function renderReportPdf(
  htmlPath: string,
  pdfPath: string,
  options: PdfOptions = {},
): Promise<void> {
  const executablePath = options.executablePath ?? findChromium();
  if (!executablePath || !existsSync(executablePath)) {
    throw new NoChromiumError(
      `no Chromium found for the PDF (looked for ${options.executablePath ?? '$TAPERLINE_CHROMIUM, /usr/bin/chromium, /usr/bin/chromium-browser'}); ` +
        'the HTML report was kept: install the chromium package, or open the HTML in a browser and print it to PDF',
    );
  }
  const { chromium } = loadPlaywright();
  let browser;
  try {
    browser = await chromium.launch({ executablePath, args: CHROMIUM_ARGS });
  } catch (err) {
    throw new NoChromiumError(
      `Chromium at ${executablePath} did not start (${(err as Error).message.split('\n')[0]}); the HTML report was kept`,
    );
  }
  try {
    // Lay the page out at A4 width (794 CSS px) so the charts are drawn at the size they print.
    const page = await browser.newPage({ viewport: { width: 794, height: 1123 } });
    await page.goto(pathToFileURL(resolve(htmlPath)).href, { waitUntil: 'load' });
    await page.waitForFunction(() => document.body.hasAttribute('data-charts-drawn'), undefined, {
      timeout: 30_000,
    });
    await page.emulateMedia({ media: 'print' });
    await page.pdf({ path: pdfPath, format: 'A4', printBackground: true, preferCSSPageSize: true });
  } finally {
    await browser.close();
  }
}

/**
 * playwright-core loaded from node_modules at run time, never bundled: it reads its own
 * package.json and browser scripts from disk, which a bundle would lose.
 */
function loadPlaywright(): typeof import('playwright-core') {
  const requireHere = createRequire(__filename);
  try {
    return requireHere('playwright-core') as typeof import('playwright-core');
  } catch (err) {
    throw new NoChromiumError(
      `the playwright-core package is needed to print the PDF and could not be loaded (${(err as Error).message.split('\n')[0]}); ` +
        'the HTML report was kept: run npm install in the project folder',
    );
  }
}
