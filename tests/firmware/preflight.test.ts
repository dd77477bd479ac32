/**
 * The test preflight (tests/preflight.mjs): on this machine every tool is there and it
 * passes; with the tools hidden from PATH and installing forbidden, it stops with one line
 * naming what is missing and the apt-get command that installs it.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';

const script = resolve(__dirname, '..', 'preflight.mjs');

test('with every system tool installed the preflight passes silently', () => {
  const r = spawnSync(process.execPath, [script], {
    encoding: 'utf8',
    env: { ...process.env, TAPERLINE_PREFLIGHT_INSTALL: '0' },
  });
  assert.equal(r.status, 0, r.stdout + r.stderr);
  assert.equal(r.stdout + r.stderr, '');
});

test('with the tools hidden from PATH it stops with one line naming them and the install command', () => {
  const dir = mkdtempSync(join(tmpdir(), 'taperline-preflight-'));
  try {
    // A PATH holding node alone: socat, gcc, avr-gcc, simavr... cannot be found.
    symlinkSync(process.execPath, join(dir, 'node'));
    const r = spawnSync(join(dir, 'node'), [script], {
      encoding: 'utf8',
      env: { PATH: dir, TAPERLINE_PREFLIGHT_INSTALL: '0' },
    });
    assert.equal(r.status, 1);
    assert.equal(r.stdout, '', 'nothing was installed');
    const lines = r.stderr.split('\n').filter((l) => l !== '');
    assert.equal(lines.length, 1, r.stderr);
    assert.match(
      lines[0],
      /^preflight: the tests need system tools that are missing: socat, .*avr-gcc \(gcc-avr\).*simavr/,
    );
    assert.match(lines[0], /Install them with: sudo apt-get install -y socat .*gcc-avr.* simavr$/);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
});
