/**
 * The renderer's one way to the backend: the Electron preload bridge when present, else the
 * WebSocket of `taperline serve` (same envelopes, shared/ipc), reconnecting when it drops.
 */
import { WS_PATH } from '@shared/ipc/channels';
import type { PushEnvelope } from '@shared/ipc/pushes';
import type { ReplyEnvelope, RequestMethod, RequestParams } from '@shared/ipc/requests';

export interface TaperlineBridge {
  request(method: string, params: unknown): Promise<unknown>;
  onPush(cb: (envelope: PushEnvelope) => void): (() => void) | void;
}

declare global {
  interface Window {
    taperline?: TaperlineBridge;
  }
}

export type ConnectionState = 'connecting' | 'open' | 'closed';

export interface Api {
  readonly mode: 'electron' | 'web';
  request<M extends RequestMethod>(method: M, params: RequestParams<M>): Promise<unknown>;
  onPush(cb: (envelope: PushEnvelope) => void): () => void;
  /** Connection changes; `open` after a reconnect means views should fetch their state again. */
  onConnection(cb: (state: ConnectionState) => void): () => void;
  /** The page's token, for download URLs of the web mode. */
  readonly token: string | null;
}

const REQUEST_TIMEOUT_MS = 60_000;
const RECONNECT_MIN_MS = 500;
const RECONNECT_MAX_MS = 5_000;

export function createApi(): Api {
  const token = new URLSearchParams(window.location.search).get('token');
  if (window.taperline) return bridgeApi(window.taperline, token);
  return webSocketApi(token);
}

function bridgeApi(bridge: TaperlineBridge, token: string | null): Api {
  return {
    mode: 'electron',
    token,
    request: (method, params) => bridge.request(method, params),
    onPush(cb) {
      const off = bridge.onPush(cb);
      return typeof off === 'function' ? off : () => {};
    },
    onConnection(cb) {
      cb('open');
      return () => {};
    },
  };
}

interface Pending {
  resolve(value: unknown): void;
  reject(err: Error): void;
  timer: number;
}

function webSocketApi(token: string | null): Api {
  const pushListeners = new Set<(envelope: PushEnvelope) => void>();
  const connectionListeners = new Set<(state: ConnectionState) => void>();
  const pending = new Map<number, Pending>();
  const outbox: string[] = [];
  let nextId = 1;
  let socket: WebSocket | null = null;
  let state: ConnectionState = 'connecting';
  let retryMs = RECONNECT_MIN_MS;

  const setState = (next: ConnectionState) => {
    state = next;
    for (const cb of connectionListeners) cb(next);
  };

  const url = () => {
    const scheme = window.location.protocol === 'https:' ? 'wss' : 'ws';
    const query = token ? `?token=${encodeURIComponent(token)}` : '';
    return `${scheme}://${window.location.host}${WS_PATH}${query}`;
  };

  const connect = () => {
    setState('connecting');
    const ws = new WebSocket(url());
    socket = ws;
    ws.addEventListener('open', () => {
      retryMs = RECONNECT_MIN_MS;
      setState('open');
      while (outbox.length > 0 && ws.readyState === WebSocket.OPEN) ws.send(outbox.shift()!);
    });
    ws.addEventListener('message', (msg) => handleMessage(String(msg.data)));
    ws.addEventListener('close', () => {
      if (socket !== ws) return;
      socket = null;
      // Requests in flight are lost with the socket: say so instead of hanging.
      for (const [id, p] of pending) {
        window.clearTimeout(p.timer);
        p.reject(
          new Error(
            'The connection to the Taperline backend dropped before it answered; reconnecting. Try again in a moment.',
          ),
        );
        pending.delete(id);
      }
      setState('closed');
      window.setTimeout(connect, retryMs);
      retryMs = Math.min(RECONNECT_MAX_MS, retryMs * 2);
    });
  };

  const handleMessage = (text: string) => {
    let msg: unknown;
    try {
      msg = JSON.parse(text);
    } catch {
      console.warn('taperline: ignored a message from the backend that is not JSON');
      return;
    }
    if (!msg || typeof msg !== 'object') return;
    if ('push' in msg) {
      for (const cb of pushListeners) cb(msg as PushEnvelope);
      return;
    }
    const reply = msg as ReplyEnvelope;
    const p = pending.get(reply.id);
    if (!p) return;
    pending.delete(reply.id);
    window.clearTimeout(p.timer);
    if (reply.ok) p.resolve(reply.result);
    else p.reject(new Error(reply.error));
  };

  connect();

  return {
    mode: 'web',
    token,
    request(method, params) {
      const id = nextId++;
      const text = JSON.stringify({ id, method, params });
      return new Promise((resolve, reject) => {
        const timer = window.setTimeout(() => {
          pending.delete(id);
          reject(new Error(`${method}: no answer from the backend within ${REQUEST_TIMEOUT_MS / 1000} s`));
        }, REQUEST_TIMEOUT_MS);
        pending.set(id, { resolve, reject, timer });
        if (socket && socket.readyState === WebSocket.OPEN) socket.send(text);
        else outbox.push(text);
      });
    },
    onPush(cb) {
      pushListeners.add(cb);
      return () => pushListeners.delete(cb);
    },
    onConnection(cb) {
      connectionListeners.add(cb);
      cb(state);
      return () => connectionListeners.delete(cb);
    },
  };
}
