/**
 * `npm start`'s launcher on a machine without the Electron binary (this one): one line says
 * so, the headless server starts with the demo station, and Ctrl-C stops everything.
 * ELECTRON_SKIP_BINARY_DOWNLOAD (honoured by electron's install.js) keeps the one fetch
 * attempt off the network; with no display, no browser window is opened.
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import WebSocket from 'ws';

const root = join(__dirname, '..', '..');
const built = existsSync(join(root, 'dist', 'cli.cjs'));

test(
  'without Electron, npm start serves the demo station headless and stops on SIGINT',
  { timeout: 90_000, skip: built ? false : 'the CLI is not built (dist/cli.cjs): run npm run build' },
  async () => {
    const dataDir = mkdtempSync(join(tmpdir(), 'taperline-start-'));
    const env: NodeJS.ProcessEnv = {
      ...process.env,
      XDG_DATA_HOME: dataDir,
      ELECTRON_SKIP_BINARY_DOWNLOAD: '1',
    };
    delete env.DISPLAY;
    delete env.WAYLAND_DISPLAY;
    const child = spawn(process.execPath, [join(root, 'bin', 'start.cjs')], {
      cwd: root,
      env,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let out = '';
    child.stdout.setEncoding('utf8').on('data', (c: string) => (out += c));
    child.stderr.setEncoding('utf8').on('data', (c: string) => (out += c));
    const exited = new Promise<number | null>((resolve) => child.once('close', (code) => resolve(code)));
    try {
      const deadline = Date.now() + 60_000;
      while (
        !/Open http:\/\/\S+ in a browser/.test(out) &&
        Date.now() < deadline &&
        child.exitCode === null
      ) {
        await new Promise((r) => setTimeout(r, 100));
      }
      const lines = out.trim().split('\n');
      assert.match(lines[0], /^The Electron binary is missing .* headless mode/);
      assert.equal(lines.filter((l) => /Electron/.test(l)).length, 1);
      // The printed address carries the access token every request needs, loopback included.
      const m = /Taperline is serving at (http:\/\/127\.0\.0\.1:\d+\/)(\?token=[A-Za-z0-9_-]+)/.exec(out);
      assert.ok(m, out);
      const [, url, tokenQuery] = m;
      assert.match(out, /\(1 station, recording to .*taperline\.sqlite/);

      const ws = new WebSocket(`${url.replace('http', 'ws')}api/ws${tokenQuery}`);
      const reply = await new Promise<{ result: { id: string }[] }>((resolve, reject) => {
        ws.once('open', () => ws.send(JSON.stringify({ id: 1, method: 'stations.list', params: {} })));
        ws.on('message', (d) => {
          const m = JSON.parse(d.toString()) as { id?: number };
          if (m.id === 1) resolve(m as { result: { id: string }[] });
        });
        ws.once('error', reject);
      });
      assert.deepEqual(
        reply.result.map((s) => s.id),
        ['sim-bench-liion-3s'],
      );
      ws.close();

      child.kill('SIGINT');
      assert.equal(await exited, 0);
      assert.match(out, /every run was closed as stopped/);
    } finally {
      if (child.exitCode === null) child.kill('SIGKILL');
      rmSync(dataDir, { recursive: true, force: true });
    }
  },
);
