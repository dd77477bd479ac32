/**
 * One benchmark, bundled like the shipped CLI (./bundle-bench.ts):
 *   node --import tsx tests/bench/run-one.ts replay-bench [--quick]
 */
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { bundleBench } from './bundle-bench';

async function main(): Promise<void> {
  const [name, ...extra] = process.argv.slice(2);
  if (!name) throw new Error('name a benchmark, e.g. replay-bench');
  const bundled = await bundleBench(join(__dirname, name.endsWith('.ts') ? name : `${name}.ts`));
  const r = spawnSync(process.execPath, [bundled, ...extra], { stdio: 'inherit' });
  process.exitCode = r.status ?? 1;
}

main().catch((err: unknown) => {
  console.error(err);
  process.exitCode = 1;
});
