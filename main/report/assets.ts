/**
 * What the Run report embeds from disk at report time: the Chart.js UMD bundle (so the file
 * makes no external request) and the Taperline version for the footer.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import packageJson from '../../package.json';

const CHART_BUNDLES = ['chart.umd.min.js', 'chart.umd.js'];

/** Folders to search for node_modules: this module's folder (source or dist bundle) and the working folder. */
function searchRoots(): string[] {
  return [__dirname, process.cwd()];
}

function findUp(relative: string): string | null {
  for (const root of searchRoots()) {
    let dir = root;
    for (;;) {
      const candidate = join(dir, relative);
      if (existsSync(candidate)) return candidate;
      const parent = dirname(dir);
      if (parent === dir) break;
      dir = parent;
    }
  }
  return null;
}

let chartJsCache: string | null = null;

/** The Chart.js UMD bundle's source; throws with a clear message when chart.js is not installed. */
export function chartJsSource(): string {
  if (chartJsCache !== null) return chartJsCache;
  const resolvedDist = resolvedChartDist();
  for (const bundle of CHART_BUNDLES) {
    const direct = resolvedDist ? join(resolvedDist, bundle) : null;
    const path =
      direct && existsSync(direct) ? direct : findUp(join('node_modules', 'chart.js', 'dist', bundle));
    if (path) {
      chartJsCache = readFileSync(path, 'utf8');
      return chartJsCache;
    }
  }
  throw new Error(
    'the Run report needs the chart.js package (node_modules/chart.js/dist/chart.umd.min.js) and it was not found; run npm install in the project folder',
  );
}

/** Where Node's own resolution finds chart.js (its main file sits in dist/), or null. */
function resolvedChartDist(): string | null {
  try {
    return dirname(require.resolve('chart.js'));
  } catch {
    return null;
  }
}

let reportChartsCache: string | null = null;

/**
 * The dashboard's chart modules bundled for the report (dist/report-charts.js, written by
 * `npm run build` from renderer/charts/report-charts.ts); throws with a clear message when absent.
 */
export function reportChartsSource(): string {
  if (reportChartsCache !== null) return reportChartsCache;
  const beside = join(__dirname, 'report-charts.js'); // dist/cli.cjs and dist/report-charts.js
  const path = existsSync(beside) ? beside : findUp(join('dist', 'report-charts.js'));
  if (!path) {
    throw new Error(
      'the Run report needs the chart bundle dist/report-charts.js and it was not found; run npm run build in the project folder',
    );
  }
  reportChartsCache = readFileSync(path, 'utf8');
  return reportChartsCache;
}

/** The version in Taperline's package.json (bundled into the build, so it is known wherever the CLI runs). */
export function taperlineVersion(): string {
  return packageJson.version;
}
