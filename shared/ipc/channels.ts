/**
 * The one API between the renderer and the backend, carried by Electron IPC (preload bridge)
 * or by a localhost WebSocket (`taperline serve`). Requests are validated on arrival against
 * the schemas in ./requests; pushes flow from the backend to every watching view.
 */

/** Electron IPC channel names (the preload exposes one function per use). */
export const IPC_CHANNELS = {
  /** renderer -> main: one request envelope, answered with a reply envelope. */
  request: 'taperline:request',
  /** main -> renderer: one push envelope. */
  push: 'taperline:push',
} as const;

/** WebSocket path of `taperline serve`. */
export const WS_PATH = '/api/ws';

/** Live redraws and snapshots are throttled to at most this many per second per station. */
export const MAX_PUSHES_PER_SECOND = 10;
