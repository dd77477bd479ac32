/**
 * The desktop window's security settings and the IPC gate, checked without Electron: the
 * Electron binary cannot exist on this machine, so the IPC event is a plain object shaped
 * like Electron's (the one place a stand-in is allowed).
 */
import { test } from 'node:test';
import assert from 'node:assert/strict';
import type { ReplyEnvelope, RequestEnvelope } from '@shared/ipc/requests';
import { handleRendererRequest } from '../../main/electron/ipc-relay';
import { APP_START_URL, checkIpcSender, isAppUrl, windowWebPreferences } from '../../main/electron/security';
import { backendArgsFrom } from '../../main/electron/args';
import { menuTemplate, SAFETY_CAUTION } from '../../main/electron/menu';
import type { AppCommand } from '@shared/ipc/pushes';

// Electron security checklist (electronjs.org/docs/latest/tutorial/security): isolation,
// sandbox, no Node integration, web security on.
test('every window is isolated, sandboxed and has no Node integration', () => {
  const prefs = windowWebPreferences('/app/dist/preload.cjs');
  assert.equal(prefs.contextIsolation, true);
  assert.equal(prefs.sandbox, true);
  assert.equal(prefs.nodeIntegration, false);
  assert.equal(prefs.nodeIntegrationInWorker, false);
  assert.equal(prefs.nodeIntegrationInSubFrames, false);
  assert.equal(prefs.webSecurity, true);
  assert.equal(prefs.allowRunningInsecureContent, false);
  assert.equal(prefs.webviewTag, false);
  assert.equal(prefs.preload, '/app/dist/preload.cjs');
});

test('only the app protocol counts as the app', () => {
  assert.equal(isAppUrl(APP_START_URL), true);
  assert.equal(isAppUrl('taperline://app/views/bench.html#x'), true);
  assert.equal(isAppUrl('taperline://other/index.html'), false);
  assert.equal(isAppUrl('file:///work/main/dist/renderer/index.html'), false);
  assert.equal(isAppUrl('https://app/index.html'), false);
  assert.equal(isAppUrl('not a url'), false);
});

const own = new Set([7]);
const fromApp = { sender: { id: 7 }, senderFrame: { url: 'taperline://app/index.html' } };

test('the IPC gate refuses foreign web contents, foreign pages and vanished frames', () => {
  assert.deepEqual(checkIpcSender(fromApp, own), { ok: true });
  assert.equal(checkIpcSender({ ...fromApp, sender: { id: 8 } }, own).ok, false);
  const foreign = checkIpcSender({ ...fromApp, senderFrame: { url: 'https://attacker.example/' } }, own);
  assert.equal(foreign.ok, false);
  assert.match(!foreign.ok ? foreign.reason : '', /attacker\.example/);
  assert.equal(checkIpcSender({ ...fromApp, senderFrame: null }, own).ok, false);
});

test('the relay forwards only checked, validated requests', async () => {
  const forwarded: RequestEnvelope[] = [];
  const forward = async (envelope: RequestEnvelope): Promise<ReplyEnvelope> => {
    forwarded.push(envelope);
    return { id: envelope.id, ok: true, result: 'answered' };
  };
  const good = await handleRendererRequest(
    fromApp,
    { id: 3, method: 'stations.list', params: {} },
    own,
    forward,
  );
  assert.deepEqual(good, { id: 3, ok: true, result: 'answered' });

  const badParams = await handleRendererRequest(
    fromApp,
    { id: 4, method: 'stations.send', params: { stationId: 'bench 1', text: 'x', ending: '\n' } },
    own,
    forward,
  );
  assert.equal(badParams.ok, false);
  assert.match(!badParams.ok ? badParams.error : '', /stationId/);

  const foreign = await handleRendererRequest(
    { ...fromApp, senderFrame: { url: 'https://attacker.example/' } },
    { id: 5, method: 'stations.list', params: {} },
    own,
    forward,
  );
  assert.match(!foreign.ok ? foreign.error : '', /^refused:/);

  const garbage = await handleRendererRequest(fromApp, 'stations.list', own, forward);
  assert.match(!garbage.ok ? garbage.error : '', /bad request envelope/);

  const failing = await handleRendererRequest(fromApp, { id: 6, method: 'ports.list', params: {} }, own, () =>
    Promise.reject(new Error('the backend stopped')),
  );
  assert.deepEqual(failing, { id: 6, ok: false, error: 'the backend stopped' });

  assert.deepEqual(
    forwarded.map((e) => e.method),
    ['stations.list'],
  );
});

test('only serve options reach the backend child, with their values', () => {
  const argv = [
    '/usr/lib/electron/electron',
    '--inspect=0',
    '--remote-debugging-port=0',
    'dist/electron-main.cjs',
    '--simulate',
    'bench-liion-3s',
    '--speedup=60',
    '--no-record',
    '--enable-logging',
  ];
  assert.deepEqual(backendArgsFrom(argv), ['--simulate', 'bench-liion-3s', '--speedup', '60', '--no-record']);
});

test('the menu offers the views, saving, quitting and the safety caution', () => {
  const commands: AppCommand[] = [];
  let quit = 0;
  let about = 0;
  const template = menuTemplate(
    { command: (c) => commands.push(c), quit: () => quit++, about: () => about++ },
    'linux',
  );
  assert.deepEqual(
    template.map((m) => m.label),
    ['File', 'View', 'Help'],
  );
  const items = template.flatMap((m) => (Array.isArray(m.submenu) ? m.submenu : []));
  const click = (label: string) => {
    const item = items.find((i) => i.label === label);
    assert.ok(item?.click, `menu item ${label}`);
    (item.click as () => void)();
  };
  for (const label of [
    'Save report…',
    'Export CSV…',
    'Bench',
    'Rack',
    'Runs',
    'Line feed',
    'Quit',
    'About Taperline',
  ])
    click(label);
  assert.deepEqual(commands, [
    { command: 'save-report' },
    { command: 'export-csv' },
    { command: 'show-view', view: 'bench' },
    { command: 'show-view', view: 'rack' },
    { command: 'show-view', view: 'runs' },
    { command: 'show-view', view: 'feed' },
  ]);
  assert.equal(quit, 1);
  assert.equal(about, 1);
  assert.match(SAFETY_CAUTION, /datasheet/);
});
