/**
 * The test preflight (tests/preflight.mjs): on this machine every tool is there and it
 * passes; with the tools hidden from PATH and installing forbidden, it stops with one line
 * naming what is missing and the apt-get command that installs it; as root it calls apt-get
 * (update once, then install the missing packages).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawnSync } from 'node:child_process';
import {
  chmodSync,
  existsSync,
  mkdtempSync,
  readFileSync,
  rmSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';

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

test(
  'as root it runs apt-get update once, then installs exactly the missing packages',
  { skip: process.getuid?.() !== 0 ? 'needs root' : false },
  () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-preflight-'));
    try {
      symlinkSync(process.execPath, join(dir, 'node'));
      // Stands in for apt-get (a real install needs the network and changes the machine): it
      // only writes down how it was called.
      const log = join(dir, 'apt.log');
      const fake = join(dir, 'apt-get');
      writeFileSync(fake, `#!/bin/sh\necho "$DEBIAN_FRONTEND $*" >> ${log}\n`);
      chmodSync(fake, 0o755);
      const r = spawnSync(join(dir, 'node'), [script], {
        encoding: 'utf8',
        env: { PATH: dir, TAPERLINE_APT_GET: fake },
      });
      const calls = readFileSync(log, 'utf8').trim().split('\n');
      assert.equal(calls.length, 2, calls.join('\n'));
      assert.equal(calls[0], 'noninteractive update -qq');
      assert.match(
        calls[1],
        /^noninteractive install -y -qq --no-install-recommends socat udev xvfb gcc make python3 pkg-config gcc-avr simavr$/,
      );
      // Nothing was really installed, so it still says what is missing, in one line.
      assert.equal(r.status, 1);
      assert.match(r.stdout, /^preflight: installing socat .* simavr with apt-get$/m);
      assert.equal(r.stderr.trim().split('\n').length, 1, r.stderr);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  },
);

// npm's own script, found beside the node that runs the tests (the usual install layout).
const npmCli = join(dirname(process.execPath), '..', 'lib', 'node_modules', 'npm', 'bin', 'npm-cli.js');

test(
  '`npm test` with the tools hidden from PATH stops at the preflight, at once, with its one line',
  { skip: existsSync(npmCli) ? false : `npm not found at ${npmCli}` },
  () => {
    const dir = mkdtempSync(join(tmpdir(), 'taperline-preflight-'));
    try {
      // node, and the shell npm runs scripts with; none of the tools the tests need.
      symlinkSync(process.execPath, join(dir, 'node'));
      symlinkSync('/bin/sh', join(dir, 'sh'));
      const r = spawnSync(join(dir, 'node'), [npmCli, 'test'], {
        cwd: resolve(__dirname, '..', '..'),
        encoding: 'utf8',
        env: { PATH: dir, TAPERLINE_PREFLIGHT_INSTALL: '0', npm_config_update_notifier: 'false' },
      });
      assert.notEqual(r.status, 0);
      const preflight = r.stderr.split('\n').filter((l) => l.startsWith('preflight:'));
      assert.equal(preflight.length, 1, r.stderr);
      assert.match(preflight[0], /missing: socat, .*Install them with: sudo apt-get install -y socat /);
      // npm echoes the whole script line first; a later step would announce itself as it starts.
      assert.doesNotMatch(
        r.stdout + r.stderr,
        /ENOENT|> taperline@\S+ (typecheck|lint|test:)/,
        'nothing after the preflight ran',
      );
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  },
);
