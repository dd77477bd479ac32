// electron-builder `beforePack` hook: puts the Node runtime that runs the app's backend inside
// the package (resources/node/), so the packaged app never looks for `node` on PATH.
//
// Why a Node runtime at all: the release fuses turn ELECTRON_RUN_AS_NODE off, so Electron's own
// binary cannot serve as Node; and utilityProcess.fork runs Node inside Electron's ABI, where
// better-sqlite3's Node build (the one `npm install` made, which the CLI and tests use) does
// not load. The Node staged here is the one running the packaging, which must be the one the
// native modules were built with: that is checked by loading them with it.
const { spawnSync } = require('node:child_process');
const { chmodSync, copyFileSync, mkdirSync, rmSync } = require('node:fs');
const { join } = require('node:path');

exports.default = async function stageNode(context) {
  const platform = context.electronPlatformName;
  const archName =
    typeof context.arch === 'number'
      ? ['ia32', 'x64', 'armv7l', 'arm64', 'universal'][context.arch]
      : String(context.arch);
  if (platform !== process.platform || archName !== process.arch) {
    throw new Error(
      `the packaged backend uses the Node that runs the packaging (${process.platform}-${process.arch}), ` +
        `and the native modules are built for it: package ${platform}-${archName} on such a machine (no cross builds)`,
    );
  }
  const root = join(__dirname, '..');
  const check = spawnSync(
    process.execPath,
    ['-e', "require('better-sqlite3'); require('@serialport/bindings-cpp')"],
    {
      cwd: root,
      encoding: 'utf8',
    },
  );
  if (check.status !== 0) {
    throw new Error(
      `the native modules do not load in ${process.execPath} (${process.version}); run npm install with this Node first:\n${check.stderr}`,
    );
  }
  const dir = join(root, 'build', 'node-runtime');
  rmSync(dir, { recursive: true, force: true });
  const target = platform === 'win32' ? join(dir, 'node.exe') : join(dir, 'bin', 'node');
  mkdirSync(join(target, '..'), { recursive: true });
  copyFileSync(process.execPath, target);
  if (platform !== 'win32') chmodSync(target, 0o755);
};
