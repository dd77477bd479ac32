/**
 * A serial port as a LineSource: opens with the configured framing, splits lines with the
 * project's one framer (`LineFramer`, 4096-byte cap), notices unplugs by what the port does
 * (a close with `disconnected`, EIO/ENXIO, a zero-byte read = hang-up, or the device path
 * now naming another device while no data comes), and reconnects on its own: at once when
 * the device folder changes (fs.watch), else on a capped exponential backoff after a failed
 * open, finding the device again when it comes back under another path (serial number /
 * vendor+product id, or its /dev/serial/by-id name).
 */
import { EventEmitter } from 'node:events';
import { existsSync, lstatSync, realpathSync, statSync } from 'node:fs';
import { realpath } from 'node:fs/promises';
import { dirname } from 'node:path';
import { SerialPortStream } from '@serialport/stream';
import { LineFramer } from '@shared/telemetry/framer';
import type { LineSource, LineSourceEvents, SourceStatus } from '../sources/types';
import type { SerialSourceConfig } from '../station/types';
import { SerialPort } from 'serialport';
import { watchDeviceFolders, type DeviceWatch } from './device-watch';
import { hangUpAwareBinding } from './hangup-binding';
import { BY_ID_DIR, byIdLinks } from './list';

export interface SerialSourceOptions {
  /** First delay after a failed open; doubles after each failed attempt up to `retryMaxMs`. */
  retryMinMs?: number;
  retryMaxMs?: number;
  /** With no data for this long, check the device still exists (some systems never report an unplug). */
  watchdogS?: number;
  /**
   * With no data for this long while the configured path now names another device node
   * (a pty link re-pointed at another /dev/pts/N, a udev name re-used), the open port is dead.
   */
  replacedQuietMs?: number;
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
  /** Folders to watch for device changes (default: the path's folder, its link target's, /dev, by-id). */
  watchDirs?: string[];
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

/**
 * Which device node a path names now, or null when it leads nowhere: the name itself and the
 * node it leads to, each by inode and change time. A re-made link or a node made again is new
 * even when the file system re-uses the inode number and the kernel the device number (ptys
 * re-use both at once).
 */
function nodeIdentity(path: string): string | null {
  try {
    const name = lstatSync(path, { bigint: true, throwIfNoEntry: false });
    const node = name && statSync(path, { bigint: true, throwIfNoEntry: false });
    return name && node ? `${name.ino}@${name.ctimeNs}>${node.rdev}:${node.ino}@${node.ctimeNs}` : null;
  } catch {
    return null;
  }
}

/**
 * A link into /dev/pts made before the pty it leads to is stale: its pty died (a killed
 * socat leaves its links behind) and the kernel gave the number to another pty, which may
 * be the far end of some other pair. Opening it would read, and lock, the wrong device.
 */
function isStalePtyLink(path: string): boolean {
  try {
    const name = lstatSync(path, { bigint: true, throwIfNoEntry: false });
    if (!name?.isSymbolicLink()) return false;
    const real = realpathSync(path);
    if (!real.startsWith('/dev/pts/')) return false;
    return name.ctimeNs < statSync(real, { bigint: true }).ctimeNs;
  } catch {
    return false;
  }
}

/** The path leads to a device that can be opened now. */
function present(exists: (path: string) => boolean, path: string): boolean {
  return exists(path) && !isStalePtyLink(path);
}

const ENDINGS = { '\n': '\n', '\r\n': '\r\n', '\r': '\r', '': '' } as const;

let sharedBinding: ReturnType<typeof hangUpAwareBinding> | null = null;

export function createSerialSource(
  config: SerialSourceConfig,
  options: SerialSourceOptions = {},
): LineSource {
  const retryMinMs = options.retryMinMs ?? 250;
  const retryMaxMs = options.retryMaxMs ?? 5000;
  const watchdogMs = (options.watchdogS ?? 5) * 1000;
  const replacedQuietMs = options.replacedQuietMs ?? 200;
  const now = options.now ?? (() => Date.now() / 1000);
  const exists = options.exists ?? existsSync;
  const openPort =
    options.openPort ??
    ((o) =>
      new SerialPortStream({
        binding: (sharedBinding ??= hangUpAwareBinding()),
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
  let opening = false;
  let openedPath: string | null = null;
  /** The device node opened (see nodeIdentity); null where it cannot be known (mock ports). */
  let openedNode: string | null = null;
  /** The node that was lost or failed to open last: only the backoff retries it, not folder changes. */
  let deadNode: string | null = null;
  let byIdName: string | null = null;
  let learnedMatch: Match | null = config.match ?? null;
  let attempts = 0;
  let retryTimer: NodeJS.Timeout | null = null;
  let watchdog: NodeJS.Timeout | null = null;
  let folders: DeviceWatch | null = null;
  let lastDataMs = 0;
  let lastRxS: number | null = null;
  let lostSinceRxS: number | null = null;
  let openProblemSaid = false;
  let stopped = false;

  function setStatus(status: SourceStatus): void {
    state = status.state;
    emitter.emit('status', status);
  }

  /** The paths that name the device without asking the system's port list. */
  function knownPath(): string | null {
    if (present(exists, config.path)) return config.path;
    if (byIdName && present(exists, byIdName)) return byIdName;
    return null;
  }

  /** Where the device is now: the configured path, its by-id name, or a port that matches. */
  async function locate(): Promise<string | null> {
    const known = knownPath();
    if (known !== null || !learnedMatch) return known;
    try {
      const found = (await list()).find((p) => matches(p, learnedMatch as Match));
      if (found) return found.path;
    } catch {
      // Listing failed (no udevadm...): keep trying the known paths.
    }
    return null;
  }

  /** Remember the by-id name and USB identity of the opened device, to find it after a replug. */
  async function learnIdentity(path: string): Promise<void> {
    try {
      const real = await realpath(path);
      folders?.add(dirname(real));
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
    openedNode = null;
    if (p) {
      p.removeAllListeners();
      p.on('error', () => undefined);
      if (p.isOpen) p.close(() => undefined);
    }
  }

  function lost(detail: string): void {
    if (stopped) return;
    deadNode = openedNode;
    detach();
    if (state !== 'lost') {
      lostSinceRxS = lastRxS ?? now();
      setStatus({ state: 'lost', detail, sinceRxS: lostSinceRxS });
    }
    // Straight back to the device when its name already leads to a new node (a quick replug);
    // the node just lost is dying, so it waits for a folder change or the backoff.
    const path = knownPath();
    if (path !== null && nodeIdentity(path) !== deadNode) void attempt();
    else scheduleRetry();
  }

  /** Is the open port still the device the path names? Called on folder changes and by the watchdog. */
  function checkOpenPort(): void {
    const p = port;
    if (!p || !openedPath) return;
    const quietMs = Date.now() - lastDataMs;
    if (openedNode !== null && quietMs >= replacedQuietMs) {
      const nowNode = nodeIdentity(openedPath);
      if (nowNode !== null && nowNode !== openedNode) {
        lost(
          `${openedPath} now names another device and the open one sends nothing (unplugged and replugged)`,
        );
        return;
      }
    }
    if (quietMs > watchdogMs && !exists(openedPath))
      lost(`${openedPath} vanished (no data for ${watchdogMs / 1000} s)`);
  }

  /** Something changed in a device folder. */
  function onFolderChange(): void {
    if (stopped) return;
    if (port) {
      checkOpenPort();
      return;
    }
    if (opening) return;
    const path = knownPath();
    if (path === null || nodeIdentity(path) === deadNode) return;
    if (retryTimer) clearTimeout(retryTimer);
    retryTimer = null;
    void attempt();
  }

  async function attempt(): Promise<void> {
    if (stopped || port || opening) return;
    opening = true;
    const path = await locate();
    if (stopped) {
      opening = false;
      return;
    }
    if (path === null) {
      opening = false;
      if (!openProblemSaid && state === 'connecting') {
        openProblemSaid = true;
        emitter.emit('problem', `${config.path} does not exist (yet); waiting for the device to appear`);
      }
      scheduleRetry();
      return;
    }
    const node = nodeIdentity(path);
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
      opening = false;
      if (port !== p || stopped) {
        if (!err) p.close(() => undefined);
        return;
      }
      if (err) {
        port = null;
        // A node failing for the first time (often one still being set up) is retried soon.
        if (node !== deadNode) attempts = 0;
        deadNode = node;
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
      deadNode = null;
      attached(p, path, node);
    });
  }

  function attached(p: SerialPortStream, path: string, node: string | null): void {
    attempts = 0;
    if (retryTimer) clearTimeout(retryTimer);
    retryTimer = null;
    openedPath = path;
    openedNode = node;
    lastDataMs = Date.now();
    // A new framer per connection: a line cut by the unplug is not glued to the next one.
    const framer = new LineFramer((text, tooLong) => {
      const rxS = now();
      lastRxS = rxS;
      emitter.emit('line', { text, rxS, tooLong });
    });
    p.on('data', (chunk: Buffer) => {
      lastDataMs = Date.now();
      framer.push(chunk);
    });
    p.on('close', (err: (Error & { disconnected?: boolean }) | null) => {
      if (port !== p) return;
      lost(
        err?.disconnected
          ? `${path} was unplugged (${err.message})`
          : `${path} closed${err ? `: ${err.message}` : ''}`,
      );
    });
    watchdog = setInterval(checkOpenPort, Math.max(100, Math.min(1000, watchdogMs / 2)));
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
      folders = watchDeviceFolders(
        options.watchDirs ?? [dirname(config.path), '/dev', byIdDir],
        onFolderChange,
      );
      setStatus({ state: 'connecting', detail: `opening ${config.path} at ${config.baudRate} baud` });
      void attempt();
    },
    async stop() {
      if (stopped) return;
      stopped = true;
      folders?.close();
      folders = null;
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
