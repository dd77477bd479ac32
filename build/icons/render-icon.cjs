// Renders build/icons/icon.svg to the 512 px icon.png electron-builder packs, with the
// system Chromium: `node build/icons/render-icon.cjs` after editing the SVG.
const { readFileSync } = require('node:fs');
const { join } = require('node:path');
const { chromium } = require('playwright-core');

async function main() {
  const browser = await chromium.launch({
    executablePath: process.env.CHROME_PATH || '/usr/bin/chromium',
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  try {
    const page = await browser.newPage({ viewport: { width: 512, height: 512 } });
    const svg = readFileSync(join(__dirname, 'icon.svg'), 'utf8');
    await page.setContent(`<html><body style="margin:0;background:transparent">${svg}</body></html>`);
    await page.screenshot({
      path: join(__dirname, 'icon.png'),
      omitBackground: true,
      clip: { x: 0, y: 0, width: 512, height: 512 },
    });
  } finally {
    await browser.close();
  }
}

main().catch((err) => {
  process.stderr.write(`render-icon: ${err.message}\n`);
  process.exitCode = 1;
});
