/**
 * A serial port as a LineSource: opens with the configured framing, splits lines with the
 * byte-run guard + readline parser, notices unplugs (close with `disconnected`, errors, a
 * data watchdog that checks the device still exists) and reconnects on its own with a
 * capped exponential backoff, finding the device again when it comes back under another
 * path (serial number / vendor+product id, or its /dev/serial/by-id name).
 */
import { EventEmitter } from 'node:events';
import { existsSync } from 'node:fs';
import { realpath } from 'node:fs/promises';
import { ReadlineParser } from '@serialport/parser-readline';
import { SerialPort } from 'serialport';
import type { SerialPortStream } from '@serialport/stream';
import type { LineSource, LineSourceEvents, SourceStatus } from '../sources/types';
import type { SerialSourceConfig } from '../station/types';
import { ByteRunGuard } from './line-guard';
import { BY_ID_DIR, byIdLinks } from './list';

export interface SerialSourceOptions {
  /** First reconnect delay; doubles after each failed attempt up to `retryMaxMs`. */
  retryMinMs?: number;
  retryMaxMs?: number;
  /** With no data for this long, check the device still exists (some systems never report an unplug). */
  watchdogS?: number;
  /** Receive clock, seconds since the epoch. */
  now?: () => number;
  /** Port factory; tests pass a @serialport/binding-mock port. */
  openPort?: (options: {
    path: string;
    baudRate: number;
    dataBits: 5 | 6 | 7 | 8;
    parity: 'none' | 'even' | 'odd';
    stopBits: 1 | 2;
  }) => SerialPortStream;
  /** Port lister used to find a device that came back under another path. */
  list?: () => Promise<Array<{ path: string; serialNumber?: string; vendorId?: string; productId?: string }>>;
  /** Whether a device path still exists (watchdog). */
  exists?: (path: string) => boolean;
  /** Where stable device names live (default /dev/serial/by-id). */
  byIdDir?: string;
}

type Match = NonNullable<SerialSourceConfig['match']>;

function matches(p: { serialNumber?: string; vendorId?: string; productId?: string }, m: Match): boolean {
  if (m.serialNumber !== undefined) return p.serialNumber === m.serialNumber;
  if (m.vendorId !== undefined || m.productId !== undefined) {
    return (
      (m.vendorId === undefined || p.vendorId?.toLowerCase() === m.vendorId.toLowerCase()) &&
      (m.productId === undefined || p.productId?.toLowerCase() === m.productId.toLowerCase())
    );
  }
  return false;
}

const ENDINGS = { '\n': '\n', '\r\n': '\r\n', '\r': '\r', '': '' } as const;

export function createSerialSource(
  config: SerialSourceConfig,
  options: SerialSourceOptions = {},
): LineSource {
  const retryMinMs = options.retryMinMs ?? 250;
  const retryMaxMs = options.retryMaxMs ?? 5000;
  const watchdogMs = (options.watchdogS ?? 5) * 1000;
  const now = options.now ?? (() => Date.now() / 1000);
  const exists = options.exists ?? existsSync;
  const openPort =
    options.openPort ??
    ((o) =>
      new SerialPort({
        path: o.path,
        baudRate: o.baudRate,
        dataBits: o.dataBits,
        parity: o.parity,
        stopBits: o.stopBits,
        autoOpen: false,
      }));
  const list = options.list ?? (() => SerialPort.list());
  const byIdDir = options.byIdDir ?? BY_ID_DIR;

  const emitter = new EventEmitter<LineSourceEvents>();
  let state: SourceStatus['state'] | 'idle' = 'idle';
  let port: SerialPortStream | null = null;
  let openedPath: string | null = null;
  let byIdName: string | null = null;
  let learnedMatch: Match | null = config.match ?? null;
  let attempts = 0;
  let retryTimer: NodeJS.Timeout | null = null;
  let watchdog: NodeJS.Timeout | null = null;
  let lastDataMs = 0;
  let lastRxS: number | null = null;
  let lostSinceRxS: number | null = null;
  let openProblemSaid = false;
  let stopped = false;

  function setStatus(status: SourceStatus): void {
    state = status.state;
    emitter.emit('status', status);
  }

  /** Where the device is now: the configured path, its by-id name, or a port that matches. */
  async function locate(): Promise<string | null> {
    if (exists(config.path)) return config.path;
    if (byIdName && exists(byIdName)) return byIdName;
    if (learnedMatch) {
      try {
        const found = (await list()).find((p) => matches(p, learnedMatch as Match));
        if (found) return found.path;
      } catch {
        // Listing failed (no udevadm...): keep trying the known paths.
      }
    }
    return null;
  }

  /** Remember the by-id name and USB identity of the opened device, to find it after a replug. */
  async function learnIdentity(path: string): Promise<void> {
    try {
      const real = await realpath(path);
      for (const [link, target] of await byIdLinks(byIdDir)) if (target === real) byIdName = link;
      if (!learnedMatch) {
        const info = (await list()).find((p) => p.path === path || p.path === real);
        if (info?.serialNumber) learnedMatch = { serialNumber: info.serialNumber };
        else if (info?.vendorId && info.productId)
          learnedMatch = { vendorId: info.vendorId, productId: info.productId };
      }
    } catch {
      // Identity is a convenience for replugs; the configured path still works.
    }
  }

  function scheduleRetry(): void {
    if (stopped || retryTimer) return;
    const delay = Math.min(retryMaxMs, retryMinMs * 2 ** Math.min(attempts, 16));
    attempts++;
    retryTimer = setTimeout(() => {
      retryTimer = null;
      void attempt();
    }, delay);
  }

  function detach(): void {
    if (watchdog) clearInterval(watchdog);
    watchdog = null;
    const p = port;
    port = null;
    if (p) {
      p.removeAllListeners();
      p.on('error', () => undefined);
      if (p.isOpen) p.close(() => undefined);
    }
  }

  function lost(detail: string): void {
    if (stopped) return;
    detach();
    if (state !== 'lost') {
      lostSinceRxS = lastRxS ?? now();
      setStatus({ state: 'lost', detail, sinceRxS: lostSinceRxS });
    }
    scheduleRetry();
  }

  async function attempt(): Promise<void> {
    if (stopped) return;
    const path = await locate();
    if (stopped) return;
    if (path === null) {
      if (!openProblemSaid && state === 'connecting') {
        openProblemSaid = true;
        emitter.emit('problem', `${config.path} does not exist (yet); waiting for the device to appear`);
      }
      scheduleRetry();
      return;
    }
    const p = openPort({
      path,
      baudRate: config.baudRate,
      dataBits: config.dataBits ?? 8,
      parity: config.parity ?? 'none',
      stopBits: config.stopBits ?? 1,
    });
    port = p;
    p.on('error', (err: Error) => {
      if (port !== p) return;
      lost(`${path}: ${err.message}`);
    });
    p.open((err) => {
      if (port !== p || stopped) {
        if (!err) p.close(() => undefined);
        return;
      }
      if (err) {
        port = null;
        p.removeAllListeners();
        if (!openProblemSaid && state === 'connecting') {
          openProblemSaid = true;
          // On Linux serial devices usually belong to the `dialout` group.
          const hint = /EACCES|permission denied/i.test(err.message)
            ? ' (no permission: add your user to the group owning the port, often dialout, then log in again)'
            : '';
          emitter.emit('problem', `cannot open ${path}: ${err.message}${hint}; retrying`);
        }
        scheduleRetry();
        return;
      }
      attached(p, path);
    });
  }

  function attached(p: SerialPortStream, path: string): void {
    attempts = 0;
    openedPath = path;
    lastDataMs = Date.now();
    const guard = new ByteRunGuard();
    // No `encoding`: lines stay bytes, decoded one by one, so a cut line never leaves half a
    // UTF-8 character in front of the next one. Object mode keeps empty lines.
    const parser = new ReadlineParser({ delimiter: '\n', encoding: undefined, readableObjectMode: true });
    const decoder = new TextDecoder('utf-8');
    let lineIndex = 0;
    p.on('data', () => {
      lastDataMs = Date.now();
    });
    p.pipe(guard).pipe(parser);
    parser.on('data', (bytes: Buffer) => {
      const tooLong = guard.takeCut(lineIndex++);
      let text = decoder.decode(bytes);
      // A `\r` is dropped only before a newline; a cut line keeps its bytes as they came.
      if (!tooLong && text.endsWith('\r')) text = text.slice(0, -1);
      const rxS = now();
      lastRxS = rxS;
      emitter.emit('line', { text, rxS, tooLong });
    });
    p.on('close', (err: (Error & { disconnected?: boolean }) | null) => {
      if (port !== p) return;
      lost(err?.disconnected ? `${path} was unplugged` : `${path} closed${err ? `: ${err.message}` : ''}`);
    });
    watchdog = setInterval(
      () => {
        if (port !== p) return;
        if (Date.now() - lastDataMs > watchdogMs && !exists(path))
          lost(`${path} vanished (no data for ${watchdogMs / 1000} s)`);
      },
      Math.max(100, Math.min(1000, watchdogMs / 2)),
    );
    watchdog.unref();
    const wasLost = state === 'lost';
    const since = lostSinceRxS;
    lostSinceRxS = null;
    const detail =
      wasLost && since !== null
        ? `${path} is back after ${Math.max(0, now() - since).toFixed(1)} s`
        : `${path} open at ${config.baudRate} baud`;
    setStatus({ state: 'open', detail });
    void learnIdentity(path);
  }

  const source = Object.assign(emitter, {
    label: config.path,
    start() {
      if (state !== 'idle') return;
      setStatus({ state: 'connecting', detail: `opening ${config.path} at ${config.baudRate} baud` });
      void attempt();
    },
    async stop() {
      if (stopped) return;
      stopped = true;
      if (retryTimer) clearTimeout(retryTimer);
      retryTimer = null;
      const p = port;
      detach();
      if (p?.isOpen) await new Promise<void>((resolve) => p.close(() => resolve()));
      setStatus({ state: 'closed', detail: `${openedPath ?? config.path} closed` });
    },
    async send(text: string, ending: '\n' | '\r\n' | '\r' | '') {
      const p = port;
      if (!p || state !== 'open' || !p.isOpen)
        throw new Error(`cannot send to ${config.path}: the port is not open (${state})`);
      await new Promise<void>((resolve, reject) => {
        p.write(text + ENDINGS[ending], (err) =>
          err ? reject(err) : p.drain((e) => (e ? reject(e) : resolve())),
        );
      });
      emitter.emit('sent', { text, rxS: now() });
    },
  });
  return source as LineSource;
}
