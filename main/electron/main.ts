/**
 * The Electron main process: one locked-down window showing the renderer from the
 * `taperline://app/` protocol, the menu, notifications for critical alarms, and a relay
 * between the window's IPC and the backend child process that runs the service.
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import {
  app,
  BrowserWindow,
  dialog,
  ipcMain,
  Menu,
  Notification,
  protocol,
  screen,
  session,
  type WebContents,
} from 'electron';
import { IPC_CHANNELS } from '@shared/ipc/channels';
import type { PushEnvelope } from '@shared/ipc/pushes';
import { backendRuntime, startBackendProcess, type BackendProcess } from './backend-process';
import { handleRendererRequest } from './ipc-relay';
import { menuTemplate, SAFETY_CAUTION } from './menu';
import { answerAppRequest } from './protocol';
import { APP_SCHEME, APP_START_URL, isAppUrl, windowWebPreferences } from './security';
import { loadWindowState, MIN_HEIGHT, MIN_WIDTH, saveWindowState, windowStatePath } from './window-state';
import { backendArgsFrom } from './args';

const distDir = __dirname;
/** Longest wait for a Run report's charts before printing it. */
const REPORT_DRAW_TIMEOUT_MS = 30_000;
const rendererDir = join(distDir, 'renderer');
const ownWebContents = new Set<number>();
let mainWindow: BrowserWindow | null = null;
let backend: BackendProcess | null = null;

// Registered before `ready`, so the scheme behaves like https (standard, secure origin).
protocol.registerSchemesAsPrivileged([
  { scheme: APP_SCHEME, privileges: { standard: true, secure: true, supportFetchAPI: true } },
]);

// A separate profile folder (tests, a second bench setup): the single-instance lock is per folder.
const userDataArg = process.argv.find((a) => a.startsWith('--user-data-dir='));
if (userDataArg) app.setPath('userData', userDataArg.slice('--user-data-dir='.length));

if (!app.requestSingleInstanceLock()) {
  app.quit();
} else {
  app.on('second-instance', () => {
    if (!mainWindow) return;
    if (mainWindow.isMinimized()) mainWindow.restore();
    mainWindow.focus();
  });
  app.on('web-contents-created', (_event, contents) => lockDown(contents));
  void app.whenReady().then(start);
}

/** No new windows, no navigation away from the app, no embedded webviews. */
function lockDown(contents: WebContents): void {
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
  contents.on('will-navigate', (event, url) => {
    if (!isAppUrl(url)) event.preventDefault();
  });
  contents.on('will-redirect', (event, url) => {
    if (!isAppUrl(url)) event.preventDefault();
  });
  contents.on('will-attach-webview', (event) => event.preventDefault());
}

async function start(): Promise<void> {
  protocol.handle(APP_SCHEME, (request) => {
    const answer = answerAppRequest(request.url, rendererDir);
    return new Response(answer.body as BodyInit, { status: answer.status, headers: answer.headers });
  });
  // The dashboard needs no camera, microphone, location, notifications-by-page or anything else.
  session.defaultSession.setPermissionRequestHandler((_wc, _permission, callback) => callback(false));
  session.defaultSession.setPermissionCheckHandler(() => false);

  const runtime = backendRuntime({
    isPackaged: app.isPackaged,
    resourcesPath: process.resourcesPath,
    distDir,
  });
  backend = startBackendProcess({
    cliPath: runtime.cliPath,
    nodePath: runtime.nodePath,
    serveArgs: backendArgsFrom(process.argv),
    onPush: relayPush,
    choosePath: async (suggestedName, what) => {
      const filters = {
        csv: [{ name: 'CSV', extensions: ['csv'] }],
        html: [{ name: 'Run report (HTML)', extensions: ['html'] }],
        pdf: [{ name: 'Run report (PDF)', extensions: ['pdf'] }],
      }[what];
      const options = { defaultPath: join(app.getPath('documents'), suggestedName), filters };
      const result = mainWindow
        ? await dialog.showSaveDialog(mainWindow, options)
        : await dialog.showSaveDialog(options);
      return result.canceled || !result.filePath ? null : result.filePath;
    },
    printPdf,
    onExit: (reason) => {
      relayPush({
        push: 'problem',
        data: { stationId: null, message: `${reason}; restart Taperline`, level: 'critical' },
      });
    },
  });

  ipcMain.handle(IPC_CHANNELS.request, (event, raw: unknown) =>
    handleRendererRequest(event, raw, ownWebContents, (envelope) => backend!.request(envelope)),
  );

  Menu.setApplicationMenu(
    Menu.buildFromTemplate(
      menuTemplate({
        command: (command) => relayPush({ push: 'command', data: command }),
        about: () =>
          void dialog.showMessageBox({
            type: 'info',
            title: 'About Taperline',
            message: `Taperline ${app.getVersion()}`,
            detail: `Watches, records and explains battery charger telemetry.\n\n${SAFETY_CAUTION}`,
          }),
        quit: () => app.quit(),
      }),
    ),
  );

  createWindow();
  backend.ready.catch((err: Error) => {
    dialog.showErrorBox('Taperline could not start its backend', err.message);
  });
}

function createWindow(): void {
  const statePath = windowStatePath(app.getPath('userData'));
  const bounds = loadWindowState(
    statePath,
    screen.getAllDisplays().map((d) => d.workArea),
  );
  const win = new BrowserWindow({
    ...bounds,
    minWidth: MIN_WIDTH,
    minHeight: MIN_HEIGHT,
    title: 'Taperline',
    show: false,
    webPreferences: windowWebPreferences(join(distDir, 'preload.cjs')),
  });
  mainWindow = win;
  const id = win.webContents.id;
  ownWebContents.add(id);
  if (bounds.maximized) win.maximize();
  win.once('ready-to-show', () => win.show());
  win.on('close', () => {
    const { x, y, width, height } = win.getNormalBounds();
    try {
      saveWindowState(statePath, { x, y, width, height, maximized: win.isMaximized() });
    } catch {
      // Losing the window position is not worth stopping the quit for.
    }
  });
  win.on('closed', () => {
    ownWebContents.delete(id);
    mainWindow = null;
  });
  void win.loadURL(APP_START_URL);
}

function relayPush(push: PushEnvelope): void {
  if (push.push === 'event' && push.data.event.type === 'alarm' && push.data.event.level === 'critical') {
    notifyCritical(push.data.stationId, push.data.event.message);
  }
  if (mainWindow && !mainWindow.isDestroyed()) mainWindow.webContents.send(IPC_CHANNELS.push, push);
}

function notifyCritical(stationId: string, message: string): void {
  if (!Notification.isSupported()) return;
  const notification = new Notification({
    title: `Taperline: critical alarm on ${stationId}`,
    body: message,
    urgency: 'critical',
  });
  notification.on('click', () => mainWindow?.focus());
  notification.show();
}

/**
 * Render a Run report to PDF in a hidden window. The report draws its charts with its own
 * inline script, so scripts run, but sandboxed, without a preload and unable to navigate.
 */
async function printPdf(html: string, path: string): Promise<void> {
  const printer = new BrowserWindow({
    show: false,
    webPreferences: { ...windowWebPreferences(''), preload: undefined },
  });
  try {
    await printer.loadURL(`data:text/html;charset=utf-8;base64,${Buffer.from(html).toString('base64')}`);
    const deadline = Date.now() + REPORT_DRAW_TIMEOUT_MS;
    while (
      !(await printer.webContents.executeJavaScript("document.body.hasAttribute('data-charts-drawn')"))
    ) {
      if (Date.now() > deadline) throw new Error('the report charts did not finish drawing');
      await new Promise((r) => setTimeout(r, 100));
    }
    const pdf = await printer.webContents.printToPDF({
      printBackground: true,
      pageSize: 'A4',
      preferCSSPageSize: true,
    });
    await writeFile(path, pdf);
  } finally {
    printer.destroy();
  }
}

// Stop the backend first, so every run is closed as stopped before the app exits.
let quitting = false;
app.on('before-quit', (event) => {
  if (quitting || !backend) return;
  event.preventDefault();
  quitting = true;
  void backend.stop().finally(() => app.quit());
});
app.on('window-all-closed', () => app.quit());
