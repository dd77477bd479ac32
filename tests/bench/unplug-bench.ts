/**
 * Unplug soak (printed, not asserted): 200 unplug/replug cycles of a socat pty pair under a
 * real `taperline record`, the far end killed with SIGTERM and SIGKILL in turn and back after
 * 0.4–1.5 s, a writer sending numbered lines. Prints missed unplugs, lines lost once the port
 * is read again, the recorder's CPU while the device is away (from /proc/<pid>/stat), and the
 * reconnect time (device link back -> first recorded line) against a baseline measured in the
 * same run: this process opening the device's own end of the same pty pair.
 * Needs `npm run build` (it runs bin/taperline.cjs) and socat.
 * Usage: node --import tsx tests/bench/unplug-bench.ts [--quick]   (--quick: 30 cycles)
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { median, runUnplugSoak } from '../integration/unplug-soak';

const quick = process.argv.includes('--quick');
const cycles = quick ? 30 : 200;

function pct(values: number[], p: number): number {
  const s = [...values].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor((p / 100) * s.length))];
}

void (async () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-unplug-bench-'));
  try {
    console.log(
      `unplug soak: ${cycles} cycles (SIGTERM / SIGKILL in turn, away 0.4–1.5 s), load average ${loadavg()[0].toFixed(2)}`,
    );
    const r = await runUnplugSoak({ cycles, dir, downMs: [400, 1500], log: console.log });
    const rec = r.reconnectMs;
    const bare = r.bareOpenMs;
    console.log(`missed unplugs:               ${r.missedUnplugs} of ${r.cycles}`);
    console.log(`lines lost once read again:   ${r.lostLines} of ${r.linesWritten} written`);
    console.log(
      `recorder CPU, device away:    ${r.idleCpuPct.toFixed(2)} % of one core (whole soak ${r.totalCpuPct.toFixed(2)} %)`,
    );
    console.log(
      `reconnect (link back -> first recorded line): median ${median(rec).toFixed(0)} ms, p90 ${pct(rec, 90).toFixed(0)} ms, worst ${Math.max(...rec).toFixed(0)} ms`,
    );
    console.log(
      `baseline (this process opening the device end): median ${median(bare).toFixed(0)} ms, worst ${Math.max(...bare).toFixed(0)} ms; reconnect / baseline median ${(median(rec) / Math.max(1, median(bare))).toFixed(1)}×`,
    );
    for (const f of r.failures) console.log(`failure: ${f}`);
    console.log(`load average after: ${loadavg()[0].toFixed(2)} (timings are noisy on a shared machine)`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
})();
