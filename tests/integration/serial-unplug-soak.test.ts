/**
 * The unplug soak, bounded for every test run (the 200-cycle version is tests/bench/unplug-bench.ts):
 * 24 unplug/replug cycles of a socat pty pair under a real `taperline record`, the far end killed
 * with SIGTERM and SIGKILL in turn. Every unplug is noticed, no line written after the recorder
 * reads the port again is lost, and the recorder does not spin while the device is away.
 * Reconnect times are printed, not asserted (they depend on the machine's load).
 * Needs `npm run build` first (it runs bin/taperline.cjs).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { median, runUnplugSoak } from './unplug-soak';

test('24 unplug/replug cycles (SIGTERM and SIGKILL of the far end): none missed, no line lost, no spinning', async (t) => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-unplug-'));
  try {
    const r = await runUnplugSoak({ cycles: 24, dir, downMs: [300, 700], linesPerCycle: 15 });
    t.diagnostic(
      `reconnect median ${median(r.reconnectMs).toFixed(0)} ms, worst ${Math.max(...r.reconnectMs).toFixed(0)} ms; recorder CPU while away ${r.idleCpuPct.toFixed(2)} %`,
    );
    assert.deepEqual(r.failures, []);
    assert.equal(r.missedUnplugs, 0);
    assert.equal(r.reconnectMs.length, 24);
    assert.equal(r.lostLines, 0);
    assert.ok(r.linesWritten >= 24 * 15);
    // The bound: a recorder with its device away stays under 5 % of a core (CPU time, not wall time;
    // the spinning read this guards against used 94–99 %).
    assert.ok(r.idleCpuPct < 5, `recorder CPU while the device was away: ${r.idleCpuPct.toFixed(2)} %`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
