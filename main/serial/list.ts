/** Serial port discovery: what `taperline ports` shows and what reconnects search. */
import { readdir, realpath } from 'node:fs/promises';
import { join } from 'node:path';
import { SerialPort } from 'serialport';

export interface PortEntry {
  path: string;
  manufacturer: string | null;
  serialNumber: string | null;
  vendorId: string | null;
  productId: string | null;
  /** Stable names under /dev/serial/by-id that point at this port (Linux). */
  byId: string[];
}

/** Listing is impossible here; `message` is one sentence a person can act on. */
export class PortListError extends Error {
  override name = 'PortListError';
}

export const BY_ID_DIR = '/dev/serial/by-id';

/** /dev/serial/by-id link -> the device it points at (empty where the folder does not exist). */
export async function byIdLinks(dir: string = BY_ID_DIR): Promise<Map<string, string>> {
  const out = new Map<string, string>();
  let names: string[];
  try {
    names = await readdir(dir);
  } catch {
    return out;
  }
  for (const name of names) {
    const link = join(dir, name);
    try {
      out.set(link, await realpath(link));
    } catch {
      // A dangling link: the device is gone.
    }
  }
  return out;
}

/** Words for a failed `SerialPort.list()`; udevadm missing is the usual case on Linux. */
export function describeListError(err: unknown): string {
  const e = err as NodeJS.ErrnoException & { path?: string; spawnargs?: string[] };
  const text = err instanceof Error ? err.message : String(err);
  if (
    (e?.code === 'ENOENT' && /udevadm/.test(`${e.path ?? ''} ${text}`)) ||
    /spawn udevadm ENOENT/.test(text)
  ) {
    return 'cannot list serial ports: the udev tools (udevadm) are missing; install the udev package, or give --port PATH directly';
  }
  return `cannot list serial ports: ${text.split('\n')[0]}; give --port PATH directly`;
}

type ListFn = () => Promise<
  Array<{ path: string; manufacturer?: string; serialNumber?: string; vendorId?: string; productId?: string }>
>;

/** Every serial port the system reports, with by-id names. Throws PortListError. */
export async function listPorts(list: ListFn = () => SerialPort.list()): Promise<PortEntry[]> {
  let ports: Awaited<ReturnType<ListFn>>;
  try {
    ports = await list();
  } catch (err) {
    throw new PortListError(describeListError(err));
  }
  const links = await byIdLinks();
  const entries: PortEntry[] = [];
  for (const p of ports) {
    let real = p.path;
    try {
      real = await realpath(p.path);
    } catch {
      // Keep the reported path.
    }
    entries.push({
      path: p.path,
      manufacturer: p.manufacturer ?? null,
      serialNumber: p.serialNumber ?? null,
      vendorId: p.vendorId ?? null,
      productId: p.productId ?? null,
      byId: [...links].filter(([, target]) => target === real).map(([link]) => link),
    });
  }
  return entries.sort((a, b) => a.path.localeCompare(b.path));
}
