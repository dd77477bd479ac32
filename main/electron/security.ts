/**
 * The security settings of the desktop window, kept apart from main.ts so tests can check
 * them without the Electron binary: the web preferences, the app's own origin, and the test
 * every IPC message must pass before it reaches the backend.
 */
import type { WebPreferences } from 'electron';

/** The renderer is served from this custom scheme instead of file:// (no ambient file access). */
export const APP_SCHEME = 'taperline';
export const APP_HOST = 'app';
export const APP_ORIGIN = `${APP_SCHEME}://${APP_HOST}`;
export const APP_START_URL = `${APP_ORIGIN}/index.html`;

/** Web preferences of every Taperline window: isolated, sandboxed, no Node. */
export function windowWebPreferences(preloadPath: string): WebPreferences {
  return {
    preload: preloadPath,
    contextIsolation: true,
    sandbox: true,
    nodeIntegration: false,
    nodeIntegrationInWorker: false,
    nodeIntegrationInSubFrames: false,
    webSecurity: true,
    allowRunningInsecureContent: false,
    webviewTag: false,
    navigateOnDragDrop: false,
    spellcheck: false,
  };
}

/** A URL belongs to the app when its origin is exactly the app protocol's. */
export function isAppUrl(url: string): boolean {
  try {
    const parsed = new URL(url);
    return parsed.protocol === `${APP_SCHEME}:` && parsed.host === APP_HOST;
  } catch {
    return false;
  }
}

/** What of an `ipcMain.handle` event the sender check reads. */
export interface IpcSenderInfo {
  sender: { id: number };
  senderFrame: { url: string } | null;
}

export type SenderCheck = { ok: true } | { ok: false; reason: string };

/**
 * An IPC message is answered only when it comes from one of our windows' web contents and
 * from a frame showing the app itself (not a page it was somehow navigated to, nor a frame).
 */
export function checkIpcSender(event: IpcSenderInfo, ownWebContentsIds: ReadonlySet<number>): SenderCheck {
  if (!ownWebContentsIds.has(event.sender.id))
    return { ok: false, reason: 'the message did not come from a Taperline window' };
  const frame = event.senderFrame;
  if (!frame) return { ok: false, reason: 'the sending frame is gone' };
  if (!isAppUrl(frame.url))
    return { ok: false, reason: `the sending page (${frame.url || 'no URL'}) is not the Taperline app` };
  return { ok: true };
}
