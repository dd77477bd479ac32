/**
 * The library's C unit tests (firmware/host/test_line.c: formatting, rounding, checksum,
 * limits), built with gcc -std=c99 -Wall -Wextra -Wpedantic -Wconversion -Werror and run;
 * and the example sketches and the README's example compile.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildPath, FIRMWARE_DIR, make } from './firmware-build';

test('the C unit tests of taperline_line.h build warning-free and pass', () => {
  make(['host']);
  const r = spawnSync(buildPath('build', 'host', 'test_line'), [], { encoding: 'utf8' });
  assert.equal(r.status, 0, r.stdout + r.stderr);
  const m = /^(\d+) checks, 0 failed$/m.exec(r.stdout);
  assert.ok(m !== null && Number(m[1]) > 50, r.stdout);
});

test('the example sketches compile for the ATmega328P against the Arduino AVR core', () => {
  // ChargerAvr is built and linked (it also runs in simavr-record.test.ts); ChargerWifi is
  // compiled for syntax and types against a declaration-only WiFi.h.
  make(['avr', 'wifi-check'], {}, 'build-examples');
});

test("the README's firmware example compiles against the library and the Arduino AVR core", () => {
  const readme = readFileSync(join(FIRMWARE_DIR, '..', 'README.md'), 'utf8');
  const code = /```cpp\n([\s\S]*?)```/.exec(readme)?.[1];
  assert.ok(code?.includes('Taperline.h'), 'the README shows the library');
  assert.ok(!readme.includes('printf'), 'no printf left in the README');
  const dir = mkdtempSync(join(tmpdir(), 'taperline-readme-'));
  try {
    const file = join(dir, 'ReadmeExample.ino');
    writeFileSync(file, code!);
    make(['syntax-check'], { SRC: file }, 'build-examples');
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
