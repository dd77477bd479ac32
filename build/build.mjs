// Bundles the CLI, the Electron main process, the preload and the renderer with esbuild.
// Type checking is separate (`npm run typecheck`), so this stays a matter of seconds.
import { build } from 'esbuild';
import { cpSync, existsSync, mkdirSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const out = join(root, 'dist');
const started = Date.now();

// Native and Electron modules stay outside the bundles: they load from node_modules.
const nodeExternal = JSON.parse(readFileSync(join(root, 'build', 'node-externals.json'), 'utf8')).modules;

const common = { bundle: true, sourcemap: true, logLevel: 'warning', absWorkingDir: root };

await Promise.all([
  build({
    ...common,
    entryPoints: ['main/cli/main.ts'],
    outfile: join(out, 'cli.cjs'),
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    external: nodeExternal,
  }),
  build({
    ...common,
    entryPoints: ['main/electron/main.ts'],
    outfile: join(out, 'electron-main.cjs'),
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    external: nodeExternal,
  }),
  // The live sweep analysis runs in a worker thread; its entry sits beside cli.cjs.
  build({
    ...common,
    entryPoints: ['main/app/sweep-worker.ts'],
    outfile: join(out, 'sweep-worker.cjs'),
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    external: nodeExternal,
  }),
  // A sandboxed preload may only require `electron` (and a few built-ins): bundle the rest in.
  build({
    ...common,
    entryPoints: ['main/electron/preload.ts'],
    outfile: join(out, 'preload.cjs'),
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    external: ['electron'],
  }),
  build({
    ...common,
    entryPoints: ['renderer/app.ts'],
    outfile: join(out, 'renderer', 'app.js'),
    platform: 'browser',
    format: 'iife',
    target: 'chrome120',
  }),
  // The Run report's charts: the dashboard's chart modules, inlined into each report file.
  build({
    ...common,
    entryPoints: ['renderer/charts/report-charts.ts'],
    outfile: join(out, 'report-charts.js'),
    platform: 'browser',
    format: 'iife',
    target: 'chrome120',
    sourcemap: false,
    minify: true,
  }),
]);

mkdirSync(join(out, 'renderer'), { recursive: true });
for (const file of ['index.html', 'styles.css']) {
  const from = join(root, 'renderer', file);
  if (existsSync(from)) cpSync(from, join(out, 'renderer', file));
}
console.log(`taperline build: dist/ in ${Date.now() - started} ms`);
