/**
 * `npm run bench`: every benchmark in turn, each in its own process so one's heap and JIT
 * state do not colour the next, each bundled first like the shipped CLI (./bundle-bench).
 * They print figures; nothing here passes or fails on time. Extra arguments (e.g. --quick)
 * are passed to each.
 */
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { bundleBench } from './bundle-bench';

const BENCHES = [
  'parse-bench.ts',
  'engine-bench.ts',
  'replay-bench.ts',
  'record-bench.ts',
  'chart-bench.ts',
  'firmware-size-bench.ts',
  'unplug-bench.ts',
  'sweep-bench.ts',
  'checks-bench.ts',
  'network-bench.ts',
];
async function main(): Promise<void> {
  const extra = process.argv.slice(2);
  let failed = 0;
  for (const bench of BENCHES) {
    console.log(`\n=== ${bench} ===`);
    const bundled = await bundleBench(join(__dirname, bench));
    const r = spawnSync(process.execPath, [bundled, ...extra], { stdio: 'inherit' });
    if (r.status !== 0) {
      failed++;
      console.log(`${bench} exited with ${r.status ?? r.signal}`);
    }
  }
  process.exitCode = failed ? 1 : 0;
}

main().catch((err: unknown) => {
  console.error(err);
  process.exitCode = 1;
});
