/**
 * A raw TCP stream of telemetry lines as a station's source: a board on Wi-Fi printing to a
 * socket, or a serial port put on the network by a serial-to-network server. Bytes go through
 * the shared LineFramer like every other source. It reconnects like a serial port: `lost`
 * when an open connection drops (the station records a gap), `open` when it is back; the
 * wait grows only while connects keep failing, so a dropped link is retried at once.
 */
import { EventEmitter } from 'node:events';
import { Socket } from 'node:net';
import { LineFramer } from '@shared/telemetry/framer';
import { describeSource, type TcpSourceConfig } from '@shared/sources/schemas';
import type { LineSource, LineSourceEvents, SourceStatus } from './types';

export interface TcpSourceOptions {
  now?: () => number;
  /** First wait after a failed connect; doubles per failure up to retryMaxMs. */
  retryMinMs?: number;
  retryMaxMs?: number;
  /** Give up a connect attempt after this long (an address that never answers). */
  connectTimeoutMs?: number;
}

const ENDINGS = { '\n': '\n', '\r\n': '\r\n', '\r': '\r', '': '' } as const;

export function createTcpSource(config: TcpSourceConfig, options: TcpSourceOptions = {}): LineSource {
  const now = options.now ?? (() => Date.now() / 1000);
  const retryMinMs = options.retryMinMs ?? 250;
  const retryMaxMs = options.retryMaxMs ?? 5000;
  const connectTimeoutMs = options.connectTimeoutMs ?? 5000;
  const label = describeSource(config);
  const emitter = new EventEmitter<LineSourceEvents>();
  let state: SourceStatus['state'] | 'idle' = 'idle';
  let socket: Socket | null = null;
  let failedConnects = 0;
  let retryTimer: NodeJS.Timeout | null = null;
  let lastRxS: number | null = null;
  let lostSinceRxS: number | null = null;
  let problemSaid = false;
  let stopped = false;

  function setStatus(status: SourceStatus): void {
    state = status.state;
    emitter.emit('status', status);
  }

  function scheduleRetry(delayMs: number): void {
    if (stopped || retryTimer) return;
    retryTimer = setTimeout(() => {
      retryTimer = null;
      connect();
    }, delayMs);
  }

  function drop(s: Socket): void {
    s.removeAllListeners();
    s.on('error', () => undefined);
    s.destroy();
  }

  function connect(): void {
    if (stopped) return;
    const s = new Socket();
    socket = s;
    let opened = false;
    // A fresh framer per connection: half a line from a dropped link is not glued to the next.
    const framer = new LineFramer((text, tooLong) => {
      const rxS = now();
      lastRxS = rxS;
      emitter.emit('line', { text, rxS, tooLong });
    });
    s.setTimeout(connectTimeoutMs, () => {
      if (!opened) s.destroy(new Error(`no answer within ${connectTimeoutMs / 1000} s`));
    });
    s.on('data', (chunk: Buffer) => framer.push(chunk));
    let lastError: Error | null = null;
    // Reported by 'close' below, which always follows an error.
    s.on('error', (err: Error) => {
      lastError = err;
    });
    s.once('connect', () => {
      if (socket !== s || stopped) return drop(s);
      opened = true;
      s.setTimeout(0);
      // Keep-alive finds a peer that vanished without closing (a board that lost power).
      s.setKeepAlive(true, 5000);
      s.setNoDelay(true);
      failedConnects = 0;
      const since = lostSinceRxS;
      lostSinceRxS = null;
      setStatus({
        state: 'open',
        detail:
          since !== null
            ? `${label} is back after ${Math.max(0, now() - since).toFixed(1)} s`
            : `${label} connected`,
      });
    });
    s.once('close', () => {
      if (socket !== s) return;
      socket = null;
      framer.end();
      s.removeAllListeners();
      if (stopped) return;
      const reason = lastError ? lastError.message : 'closed by the other end';
      if (opened) {
        // A link that was up: lost now, retried at once (no backoff for a drop).
        lostSinceRxS = lastRxS ?? now();
        setStatus({ state: 'lost', detail: `${label}: ${reason}; reconnecting`, sinceRxS: lostSinceRxS });
        scheduleRetry(retryMinMs);
        return;
      }
      if (!problemSaid && state === 'connecting') {
        problemSaid = true;
        emitter.emit('problem', `cannot connect to ${label}: ${reason}; retrying`);
      }
      const delay = Math.min(retryMaxMs, retryMinMs * 2 ** Math.min(failedConnects, 16));
      failedConnects++;
      scheduleRetry(delay);
    });
    s.connect({ host: config.host, port: config.port });
  }

  const source = Object.assign(emitter, {
    label,
    start() {
      if (state !== 'idle') return;
      setStatus({ state: 'connecting', detail: `connecting to ${label}` });
      connect();
    },
    async stop() {
      if (stopped) return;
      stopped = true;
      if (retryTimer) clearTimeout(retryTimer);
      retryTimer = null;
      const s = socket;
      socket = null;
      if (s) {
        await new Promise<void>((resolve) => {
          s.once('close', () => resolve());
          s.end();
          setTimeout(() => s.destroy(), 500).unref();
        });
        s.removeAllListeners();
      }
      setStatus({ state: 'closed', detail: `${label} closed` });
    },
    async send(text: string, ending: '\n' | '\r\n' | '\r' | '') {
      const s = socket;
      if (!s || state !== 'open' || s.destroyed)
        throw new Error(`cannot send to ${label}: not connected (${state})`);
      await new Promise<void>((resolve, reject) =>
        s.write(text + ENDINGS[ending], (err) => (err ? reject(err) : resolve())),
      );
      emitter.emit('sent', { text, rxS: now() });
    },
  });
  return source;
}
