#!/usr/bin/env node
// What `npm start` runs after the build: the desktop app when the Electron binary is there,
// else the same dashboard headless (`taperline serve`) in a Chromium app window or a browser.
// Arguments after `npm start --` go to the backend (e.g. --station-port PATH --profile P.json).
const { spawn, spawnSync } = require('node:child_process');
const fs = require('node:fs');
const os = require('node:os');
const path = require('node:path');

const root = path.join(__dirname, '..');
const dist = path.join(root, 'dist');
const DEMO_SCENARIO = 'bench-liion-3s';
/** How long the one try to fetch the Electron binary may take (it fails fast without network). */
const INSTALL_TIMEOUT_MS = 30_000;

const userArgs = process.argv.slice(2);
const portChosen =
  userArgs.includes('--station-port') || userArgs.some((a) => a.startsWith('--station-port='));
const simulateChosen = userArgs.includes('--simulate') || userArgs.some((a) => a.startsWith('--simulate='));
const stationArgs = portChosen || simulateChosen ? userArgs : ['--simulate', DEMO_SCENARIO, ...userArgs];

/** The Electron binary's path when it exists; `require('electron')` throws when it was never fetched. */
function electronBinary() {
  try {
    const id = require.resolve('electron', { paths: [root] });
    delete require.cache[id];
    const binary = require(id);
    return typeof binary === 'string' && fs.existsSync(binary) ? binary : null;
  } catch {
    return null;
  }
}

function tryInstallElectron() {
  const installer = path.join(root, 'node_modules', 'electron', 'install.js');
  if (!fs.existsSync(installer)) return;
  spawnSync(process.execPath, [installer], { cwd: root, stdio: 'ignore', timeout: INSTALL_TIMEOUT_MS });
}

const children = new Set();
let stopping = false;
function track(child) {
  children.add(child);
  child.on('close', () => children.delete(child));
  return child;
}
function stopAll(code) {
  if (stopping) return;
  stopping = true;
  for (const child of children) child.kill('SIGTERM');
  const force = setTimeout(() => {
    for (const child of children) child.kill('SIGKILL');
    process.exit(code);
  }, 8000);
  force.unref();
  const wait = () => (children.size === 0 ? process.exit(code) : setTimeout(wait, 50));
  wait();
}
process.on('SIGINT', () => stopAll(0));
process.on('SIGTERM', () => stopAll(0));

function runElectron(binary) {
  const child = track(
    spawn(binary, [path.join(dist, 'electron-main.cjs'), ...stationArgs], {
      cwd: root,
      stdio: 'inherit',
      // The backend child runs on this plain Node: better-sqlite3 is built for its ABI.
      env: { ...process.env, TAPERLINE_NODE: process.execPath },
    }),
  );
  child.on('close', (code) => stopAll(code ?? 0));
}

function findChromium() {
  const candidates = [
    process.env.CHROME_PATH,
    'chromium',
    'chromium-browser',
    'google-chrome-stable',
    'google-chrome',
  ];
  for (const name of candidates) {
    if (!name) continue;
    if (path.isAbsolute(name)) {
      if (fs.existsSync(name)) return name;
      continue;
    }
    for (const dir of (process.env.PATH || '').split(path.delimiter)) {
      const full = path.join(dir, name);
      if (dir && fs.existsSync(full)) return full;
    }
  }
  return null;
}

function runHeadless() {
  const serveArgs = ['serve', '--port', '0', ...stationArgs];
  if (!portChosen && !userArgs.some((a) => a === '--speedup' || a.startsWith('--speedup=')))
    serveArgs.push('--speedup', '60');
  const server = track(
    spawn(process.execPath, [path.join(dist, 'cli.cjs'), ...serveArgs], {
      cwd: root,
      stdio: ['ignore', 'pipe', 'inherit'],
    }),
  );
  server.on('close', (code) => stopAll(code ?? 0));
  let opened = false;
  let buffered = '';
  server.stdout.setEncoding('utf8');
  server.stdout.on('data', (chunk) => {
    process.stdout.write(chunk);
    buffered += chunk;
    const match = /(http:\/\/\S+)/.exec(buffered);
    if (!opened && match) {
      opened = true;
      openAppWindow(match[1]);
    }
  });
}

function openAppWindow(url) {
  const chromium = findChromium();
  const display = process.env.DISPLAY || process.env.WAYLAND_DISPLAY;
  if (!chromium || !display) {
    process.stdout.write(`Open ${url} in a browser on this machine.\n`);
    return;
  }
  // A fresh profile folder: no extensions, no saved state, removed when the window closes.
  const profileDir = fs.mkdtempSync(path.join(os.tmpdir(), 'taperline-chromium-'));
  const browser = track(
    spawn(
      chromium,
      [`--app=${url}`, `--user-data-dir=${profileDir}`, '--no-first-run', '--no-default-browser-check'],
      {
        stdio: 'ignore',
      },
    ),
  );
  browser.on('close', () => {
    fs.rmSync(profileDir, { recursive: true, force: true });
    stopAll(0);
  });
}

let binary = electronBinary();
if (!binary) {
  tryInstallElectron();
  binary = electronBinary();
}
if (binary) {
  runElectron(binary);
} else {
  process.stdout.write(
    'The Electron binary is missing (it could not be downloaded), so Taperline runs in headless mode in a browser.\n',
  );
  runHeadless();
}
