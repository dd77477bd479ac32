/**
 * Benchmarks measure the code as it ships: `taperline` runs one esbuild bundle
 * (dist/cli.cjs), where calls between modules are plain calls. Run through tsx, every
 * module is compiled apart and each imported binding is read through a getter, which
 * costs the per-line paths up to a third of their speed. So a bench is bundled with the
 * CLI's own settings into .bench/bundled/ and that file is what runs.
 */
import { build } from 'esbuild';
import { existsSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import nodeExternals from '../../build/node-externals.json';

/** The project folder: the nearest folder above `from` holding package.json. */
export function projectRoot(from: string = __dirname): string {
  let dir = from;
  while (!existsSync(join(dir, 'package.json'))) {
    const up = dirname(dir);
    if (up === dir) throw new Error(`no package.json above ${from}`);
    dir = up;
  }
  return dir;
}

/** Bundles tests/bench/<name>.ts like dist/cli.cjs; returns the path of the bundle. */
export async function bundleBench(benchFile: string): Promise<string> {
  const root = projectRoot();
  const outfile = join(root, '.bench', 'bundled', basename(benchFile).replace(/\.ts$/, '.cjs'));
  await build({
    entryPoints: [benchFile],
    outfile,
    bundle: true,
    platform: 'node',
    format: 'cjs',
    target: 'node20',
    sourcemap: false,
    logLevel: 'warning',
    absWorkingDir: root,
    // The same externals as the CLI's bundle, and the tools that only run the benches.
    external: [...nodeExternals.modules, 'esbuild', 'tsx'],
  });
  return outfile;
}
