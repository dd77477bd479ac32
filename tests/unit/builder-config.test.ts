/**
 * build/electron-builder.yml checked without packaging (packaging downloads Electron, which
 * cannot happen here): against electron-builder's own configuration schema, and for the
 * things a broken package would show only on a user's machine.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';

const root = join(__dirname, '..', '..');
const requireHere = createRequire(__filename);
// js-yaml and app-builder-lib come with electron-builder (a dev dependency).
const yaml = requireHere('js-yaml') as { load(text: string): unknown };
const { validateConfiguration } = requireHere(
  join(root, 'node_modules/app-builder-lib/out/util/config/config.js'),
) as {
  validateConfiguration(
    config: unknown,
    logger: { isEnabled: boolean; add(key: string, value: unknown): void },
  ): Promise<void>;
};

interface BuilderConfig {
  appId: string;
  productName: string;
  files: string[];
  asarUnpack: string[];
  extraMetadata: { main: string };
  npmRebuild: boolean;
  linux: { target: string[]; maintainer: string; icon: string };
  mac: { icon: string };
  win: { icon: string };
}

const config = yaml.load(readFileSync(join(root, 'build/electron-builder.yml'), 'utf8')) as BuilderConfig;

/** Does a minimatch-style pattern of the config (only `**` and `*` are used) cover a path? */
function covers(pattern: string, path: string): boolean {
  const regex = pattern
    .replace(/[.+^${}()|[\]\\]/g, '\\$&')
    .split('**')
    .map((part) => part.replace(/\*/g, '[^/]*'))
    .join('.*');
  return new RegExp(`^${regex}$`).test(path);
}

test('the config passes electron-builder’s own schema validation', async () => {
  await validateConfiguration(config, { isEnabled: false, add: () => undefined });
  // The validator is real: an unknown key is refused.
  await assert.rejects(
    validateConfiguration({ ...config, packIt: true }, { isEnabled: false, add: () => undefined }),
    /configuration/,
  );
});

test('identity and Linux packaging fields are present', () => {
  assert.match(config.appId, /^[a-z0-9]+(\.[a-z0-9-]+)+$/);
  assert.equal(config.productName, 'Taperline');
  assert.deepEqual([...config.linux.target].sort(), ['AppImage', 'deb']);
  // electron-builder's deb target needs a maintainer (or the author's e-mail).
  assert.match(config.linux.maintainer, /<[^@\s]+@[^>\s]+>/);
  for (const icon of [config.linux.icon, config.mac.icon, config.win.icon])
    assert.ok(existsSync(join(root, icon)), icon);
  const png = readFileSync(join(root, config.linux.icon));
  // PNG signature (ISO/IEC 15948) and a width of at least 256 px, which Linux desktops want.
  assert.deepEqual([...png.subarray(0, 8)], [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  assert.ok(png.readUInt32BE(16) >= 256);
});

test('files cover every bundle the build makes, and the entry is the built one', () => {
  const build = readFileSync(join(root, 'build/build.mjs'), 'utf8');
  const outfiles = [...build.matchAll(/outfile: join\(out, (['a-z.,\s-]+)\)/g)].map((m) =>
    ['dist', ...m[1].split(',').map((s) => s.trim().replace(/'/g, ''))].join('/'),
  );
  assert.ok(
    outfiles.includes('dist/electron-main.cjs') && outfiles.includes('dist/cli.cjs'),
    outfiles.join(' '),
  );
  for (const file of [...outfiles, 'dist/renderer/index.html', 'dist/renderer/styles.css', 'package.json']) {
    assert.ok(
      config.files.some((p) => covers(p, file)),
      `files covers ${file}`,
    );
  }
  assert.ok(outfiles.includes(config.extraMetadata.main));
});

test('every native module and what the Node backend child loads stays outside the asar', () => {
  const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as {
    dependencies: Record<string, string>;
  };
  const nativeModules = ['better-sqlite3', '@serialport/bindings-cpp'];
  for (const name of nativeModules) {
    assert.ok(existsSync(join(root, 'node_modules', name, 'binding.gyp')), `${name} is a native module`);
    assert.ok(
      config.asarUnpack.some((p) => covers(p, `node_modules/${name}/build/Release/x.node`)),
      `${name} unpacked`,
    );
  }
  // Plain Node cannot read app.asar: the backend bundle and the externals it requires stay out.
  assert.ok(config.asarUnpack.some((p) => covers(p, 'dist/cli.cjs')));
  const runtimeOf = (name: string): string[] => {
    const manifest = JSON.parse(readFileSync(join(root, 'node_modules', name, 'package.json'), 'utf8')) as {
      dependencies?: Record<string, string>;
    };
    return Object.keys(manifest.dependencies ?? {});
  };
  const seen = new Set<string>();
  const queue = ['better-sqlite3', 'serialport'].filter((n) => n in pkg.dependencies);
  while (queue.length) {
    const name = queue.shift()!;
    if (seen.has(name) || name === 'prebuild-install') continue; // prebuild-install runs at install time only
    seen.add(name);
    queue.push(...runtimeOf(name));
  }
  for (const name of seen) {
    assert.ok(
      config.asarUnpack.some((p) => covers(p, `node_modules/${name}/index.js`)),
      `${name} unpacked`,
    );
  }
  // Native modules keep their Node build (the backend is a Node process): no rebuild for Electron.
  assert.equal(config.npmRebuild, false);
});

interface Fuses {
  runAsNode: boolean;
  enableCookieEncryption: boolean;
  enableNodeOptionsEnvironmentVariable: boolean;
  enableNodeCliInspectArguments: boolean;
  enableEmbeddedAsarIntegrityValidation: boolean;
  onlyLoadAppFromAsar: boolean;
  grantFileProtocolExtraPrivileges: boolean;
}
const release = config as unknown as {
  electronFuses: Fuses;
  beforePack: string;
  extraResources: Array<{ from: string; to: string }>;
};

test('release fuses: no run-as-node, cookies encrypted, no NODE_OPTIONS or --inspect, asar only and checked', () => {
  // Fuse names and meanings: Electron's "Electron Fuses" tutorial and @electron/fuses (FuseV1Options).
  assert.deepEqual(release.electronFuses, {
    runAsNode: false,
    enableCookieEncryption: true,
    enableNodeOptionsEnvironmentVariable: false,
    enableNodeCliInspectArguments: false,
    enableEmbeddedAsarIntegrityValidation: true,
    onlyLoadAppFromAsar: true,
    grantFileProtocolExtraPrivileges: false,
  });
});

test('the test build differs only in the --inspect fuse Playwright needs, and passes the schema', async () => {
  const testConfig = yaml.load(readFileSync(join(root, 'build/electron-builder.test.yml'), 'utf8')) as {
    extends: string;
    directories: { output: string };
    electronFuses: Fuses;
  };
  assert.equal(testConfig.extends, 'build/electron-builder.yml');
  assert.notEqual(testConfig.directories.output, 'out');
  assert.deepEqual(testConfig.electronFuses, {
    ...release.electronFuses,
    enableNodeCliInspectArguments: true,
  });
  const { extends: _base, ...own } = testConfig;
  await validateConfiguration({ ...config, ...own }, { isEnabled: false, add: () => undefined });
});

test('the packaged backend runs the Node packed with the app on the unpacked CLI, never one from PATH', async () => {
  const { backendRuntime } = await import('../../main/electron/backend-process');
  const packaged = backendRuntime({
    isPackaged: true,
    resourcesPath: '/opt/Taperline/resources',
    distDir: '/ignored',
    platform: 'linux',
    env: { TAPERLINE_NODE: '/tmp/evil-node' },
  });
  assert.deepEqual(packaged, {
    nodePath: '/opt/Taperline/resources/node/bin/node',
    cliPath: '/opt/Taperline/resources/app.asar.unpacked/dist/cli.cjs',
  });
  assert.equal(
    backendRuntime({
      isPackaged: true,
      resourcesPath: 'C:\\T\\resources',
      distDir: '',
      platform: 'win32',
    }).nodePath.endsWith('node.exe'),
    true,
  );
  // The packed runtime is where the config puts it, and the CLI it runs is outside app.asar.
  assert.deepEqual(release.extraResources, [{ from: 'build/node-runtime', to: 'node' }]);
  assert.ok(config.asarUnpack.some((p) => covers(p, 'dist/cli.cjs')));
  // From a checkout: TAPERLINE_NODE (set by bin/start.cjs), else node.
  assert.deepEqual(backendRuntime({ isPackaged: false, resourcesPath: '', distDir: '/repo/dist', env: {} }), {
    nodePath: 'node',
    cliPath: '/repo/dist/cli.cjs',
  });
});

test('the beforePack hook stages this Node (which loads the native modules) and refuses cross builds', async () => {
  assert.equal(release.beforePack, 'build/stage-node.cjs');
  const hook = requireHere(join(root, release.beforePack)) as {
    default(context: { electronPlatformName: string; arch: string }): Promise<void>;
  };
  const other = process.platform === 'linux' ? 'win32' : 'linux';
  await assert.rejects(hook.default({ electronPlatformName: other, arch: process.arch }), /no cross builds/);
  const staged = join(root, 'build', 'node-runtime', process.platform === 'win32' ? 'node.exe' : 'bin/node');
  try {
    await hook.default({ electronPlatformName: process.platform, arch: process.arch });
    const { execFileSync } = await import('node:child_process');
    assert.equal(
      execFileSync(staged, ['-p', 'process.version'], { encoding: 'utf8' }).trim(),
      process.version,
    );
  } finally {
    const { rmSync } = await import('node:fs');
    rmSync(join(root, 'build', 'node-runtime'), { recursive: true, force: true });
  }
});
