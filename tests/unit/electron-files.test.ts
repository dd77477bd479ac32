/**
 * The file side of the desktop shell on real temporary folders: the `taperline://app/`
 * protocol answers and the remembered window state.
 */
import { after, test } from 'node:test';
import assert from 'node:assert/strict';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { answerAppRequest } from '../../main/electron/protocol';
import {
  DEFAULT_BOUNDS,
  loadWindowState,
  saveWindowState,
  windowStatePath,
} from '../../main/electron/window-state';

const dir = mkdtempSync(join(tmpdir(), 'taperline-electron-'));
const rendererDir = join(dir, 'renderer');
mkdirSync(join(rendererDir, 'views'), { recursive: true });
writeFileSync(join(rendererDir, 'index.html'), '<!doctype html><title>Taperline</title>\n');
writeFileSync(join(rendererDir, 'views', 'bench.js'), 'export {};\n');
writeFileSync(join(dir, 'secret.txt'), 'outside\n');
symlinkSync(join(dir, 'secret.txt'), join(rendererDir, 'link.txt'));
after(() => rmSync(dir, { recursive: true, force: true }));

test('the app protocol serves the bundle with the CSP header', () => {
  const page = answerAppRequest('taperline://app/', rendererDir);
  assert.equal(page.status, 200);
  assert.equal(page.headers['Content-Type'], 'text/html; charset=utf-8');
  const csp = page.headers['Content-Security-Policy'];
  assert.match(csp, /default-src 'self'/);
  assert.match(csp, /script-src 'self'/);
  assert.match(csp, /connect-src 'self'(;|$)/);
  assert.match(csp, /frame-ancestors 'none'/);
  assert.match(String(page.body), /<title>Taperline/);
  const script = answerAppRequest('taperline://app/views/bench.js?v=1', rendererDir);
  assert.equal(script.status, 200);
  assert.equal(script.headers['Content-Type'], 'text/javascript; charset=utf-8');
});

test('the app protocol refuses other hosts, traversal and links out of the bundle', () => {
  assert.equal(answerAppRequest('taperline://evil/index.html', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/../secret.txt', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/%2e%2e/secret.txt', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/views/..%2f..%2fsecret.txt', rendererDir).status, 403);
  assert.equal(answerAppRequest('taperline://app/link.txt', rendererDir).status, 404);
  assert.equal(answerAppRequest('taperline://app/missing.js', rendererDir).status, 404);
});

test('the window state is remembered, and ignored when damaged or off every display', () => {
  const path = windowStatePath(join(dir, 'user-data'));
  const displays = [{ x: 0, y: 0, width: 1920, height: 1080 }];
  assert.deepEqual(loadWindowState(path, displays), DEFAULT_BOUNDS);
  saveWindowState(path, { x: 100, y: 80, width: 1400, height: 900, maximized: true });
  assert.deepEqual(loadWindowState(path, displays), {
    x: 100,
    y: 80,
    width: 1400,
    height: 900,
    maximized: true,
  });
  // The monitor it was on is gone: keep the size, let the system place it.
  assert.deepEqual(loadWindowState(path, [{ x: 3000, y: 0, width: 800, height: 600 }]), {
    width: 1400,
    height: 900,
    maximized: true,
  });
  writeFileSync(path, '{"width": "wide"');
  assert.deepEqual(loadWindowState(path, displays), DEFAULT_BOUNDS);
  saveWindowState(path, { width: 200, height: 100, maximized: false });
  assert.deepEqual(loadWindowState(path, displays), { width: 900, height: 600, maximized: false });
  assert.doesNotThrow(() => JSON.parse(readFileSync(path, 'utf8')));
});
