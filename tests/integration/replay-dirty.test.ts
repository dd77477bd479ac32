/**
 * `taperline replay --events` on a dirty log (invented garden-sensor charge, 1 line a second):
 * one corrupt device time, lines out of order, a 60 s hole and an impossible value. The run
 * keeps its real length and charge, the hole is printed as a gap, and the summary counts the
 * time glitches and the implausible line.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const ROOT = join(__dirname, '..', '..');
const BIN = join(ROOT, 'bin', 'taperline.cjs');
const dir = mkdtempSync(join(tmpdir(), 'taperline-dirty-'));
test.after(() => rmSync(dir, { recursive: true, force: true }));

test('replay of a dirty log: real duration and charge, a gap event, glitches counted in the summary', () => {
  // 3S pack at 1.000 A for 600 s: 600 × 1 A / 3600 = 0.1667 Ah (coulomb counting), less the 61 s hole.
  const lines: string[] = [];
  for (let t = 0; t <= 600; t++) {
    if (t > 300 && t <= 360) continue; // the hole: no line for 61 s
    lines.push(`t=${t} vbat=${(11.1 + t / 6000).toFixed(4)} ibat=1.000 temp=25.0`);
  }
  lines[100] = 't=1000000 vbat=11.1167 ibat=1.000 temp=25.0'; // one corrupt device time
  [lines[200], lines[201]] = [lines[201], lines[200]]; // a pair out of order
  lines[250] = 't=250 vbat=1e300 ibat=1.000 temp=25.0'; // an impossible value
  const log = join(dir, 'dirty.log');
  const profile = join(dir, 'pack.json');
  writeFileSync(log, lines.join('\n') + '\n');
  writeFileSync(
    profile,
    JSON.stringify({
      name: 'garden sensor 3S (demo)',
      chemistry: 'li-ion',
      cells: 3,
      capacityAh: 2.5,
      chargeCurrentA: 1,
    }),
  );
  const r = spawnSync(process.execPath, [BIN, 'replay', log, '--profile', profile, '--events'], {
    cwd: ROOT,
    encoding: 'utf8',
  });
  assert.equal(r.status, 0, r.stderr);
  const records = r.stdout
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as { type: string; [k: string]: unknown });
  const gaps = records.filter((e) => e.type === 'gap');
  assert.equal(gaps.length, 1);
  assert.equal(gaps[0].t, 300);
  assert.ok(typeof gaps[0].durationS === 'number' && gaps[0].durationS >= 61 && gaps[0].durationS <= 62);
  const summary = records.at(-1)!;
  assert.equal(summary.type, 'summary');
  assert.equal(summary.durationS, 600);
  assert.equal(summary.timeGlitches, 2);
  assert.equal(summary.clockResets, 0);
  assert.equal(summary.rejected, 1);
  // 600 s of charge minus the 61 s hole (the rejected line's neighbours are integrated across
  // it, the corrupt and out-of-order lines add no time): 539 s at 1 A.
  const ah = summary.ah as number;
  assert.ok(Math.abs(ah - 539 / 3600) < 0.002, `${ah} Ah`);
});
