/**
 * Chart benchmark: the Bench view in real Chromium with a 7-day 1 Hz run (604,800 invented
 * samples, through the `?bench=1` hook), zoomed in and out 50 times. Prints the median and
 * p95 redraw time (decimation + Chart.js update of every chart). Figures, not assertions:
 * the machine is shared. Run: node --import tsx tests/bench/chart-bench.ts
 */
import { openBrowser } from '../e2e/helpers/browser';
import { serveRenderer } from '../e2e/helpers/static-server';

const SAMPLES = Number(process.env.TAPERLINE_BENCH_SAMPLES ?? 7 * 24 * 3600);
const ZOOMS = 50;

function percentile(sorted: number[], p: number): number {
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i];
}

async function main(): Promise<void> {
  const server = await serveRenderer();
  const browser = await openBrowser();
  try {
    const { page } = browser;
    await page.goto(`${server.url}/?bench=1#bench`);
    await page.waitForFunction(() => window.__taperlineBench !== undefined);
    const loadMs = await page.evaluate((n) => window.__taperlineBench!.load(n), SAMPLES);
    const allMs = await page.evaluate(() => window.__taperlineBench!.showAll());
    // Zoom in 25 steps from the whole week to about an hour, then back out: 50 redraws.
    const times = await page.evaluate((zooms) => {
      const hook = window.__taperlineBench!;
      const out: number[] = [];
      const factor = Math.pow(1 / 168, 1 / (zooms / 2));
      for (let i = 0; i < zooms; i++) out.push(hook.zoom(i < zooms / 2 ? factor : 1 / factor));
      return out;
    }, ZOOMS);
    const sorted = [...times].sort((a, b) => a - b);
    const median = percentile(sorted, 50);
    console.log(
      `chart-bench: ${SAMPLES} samples (1 Hz, ${(SAMPLES / 86400).toFixed(1)} days), 4 charts, 5 datasets`,
    );
    console.log(`  load + first draw: ${loadMs.toFixed(0)} ms; whole-run redraw: ${allMs.toFixed(1)} ms`);
    console.log(
      `  ${ZOOMS} zoom redraws: median ${median.toFixed(1)} ms, p95 ${percentile(sorted, 95).toFixed(1)} ms, max ${sorted[sorted.length - 1].toFixed(1)} ms (target median < 30 ms)`,
    );
    if (browser.errors.length) console.log(`  page errors: ${browser.errors.slice(0, 3).join(' | ')}`);
  } finally {
    await browser.close();
    await server.close();
  }
}

main().catch((err) => {
  console.error(err);
  process.exitCode = 1;
});
