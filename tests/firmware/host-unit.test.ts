/**
 * The library's C unit tests (firmware/host/test_line.c: formatting, rounding, checksum,
 * limits), built with gcc -std=c99 -Wall -Wextra -Wpedantic -Wconversion -Werror and run.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { buildPath, make } from './firmware-build';

test('the C unit tests of taperline_line.h build warning-free and pass', () => {
  make(['host']);
  const r = spawnSync(buildPath('build', 'host', 'test_line'), [], { encoding: 'utf8' });
  assert.equal(r.status, 0, r.stdout + r.stderr);
  const m = /^(\d+) checks, 0 failed$/m.exec(r.stdout);
  assert.ok(m !== null && Number(m[1]) > 50, r.stdout);
});
