/**
 * Watches the folders where a serial device's name can appear or change (inotify through
 * fs.watch): the folder of the configured path (a udev name in /dev, a socat link in /tmp),
 * the folder its link points into (/dev/pts for a pty), /dev and /dev/serial/by-id. Any change
 * there calls `onChange`, so a replugged device is opened at once instead of at the next
 * backoff step. Folders that do not exist or cannot be watched are skipped: the backoff
 * timer still finds the device, only later.
 */
import { watch, type FSWatcher } from 'node:fs';

export interface DeviceWatch {
  /** Also watch this folder (no-op when already watched). */
  add(dir: string): void;
  close(): void;
}

export function watchDeviceFolders(dirs: Iterable<string>, onChange: () => void): DeviceWatch {
  const watchers = new Map<string, FSWatcher>();
  let closed = false;
  function add(dir: string): void {
    if (closed || watchers.has(dir)) return;
    try {
      const w = watch(dir, { persistent: false }, () => onChange());
      // A watched folder that goes away (by-id when the last adapter leaves) ends its watcher.
      w.on('error', () => {
        w.close();
        watchers.delete(dir);
      });
      watchers.set(dir, w);
    } catch {
      // Missing folder or no inotify watches left: the retry timer covers it.
    }
  }
  for (const dir of dirs) add(dir);
  return {
    add,
    close() {
      closed = true;
      for (const w of watchers.values()) w.close();
      watchers.clear();
    },
  };
}
