/**
 * Remembers the window's size and position in the user-data folder, and never restores a
 * window somewhere no display shows it (a monitor unplugged since).
 */
import { mkdirSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';

export interface WindowBounds {
  x?: number;
  y?: number;
  width: number;
  height: number;
  maximized: boolean;
}

export interface DisplayArea {
  x: number;
  y: number;
  width: number;
  height: number;
}

export const DEFAULT_BOUNDS: WindowBounds = { width: 1280, height: 820, maximized: false };
export const MIN_WIDTH = 900;
export const MIN_HEIGHT = 600;
export const WINDOW_STATE_FILE = 'window-state.json';

export function windowStatePath(userDataDir: string): string {
  return join(userDataDir, WINDOW_STATE_FILE);
}

/** The saved bounds, or the defaults when the file is missing, damaged or off every display. */
export function loadWindowState(path: string, displays: readonly DisplayArea[]): WindowBounds {
  let saved: unknown;
  try {
    saved = JSON.parse(readFileSync(path, 'utf8'));
  } catch {
    return { ...DEFAULT_BOUNDS };
  }
  if (!isBounds(saved)) return { ...DEFAULT_BOUNDS };
  const bounds: WindowBounds = {
    width: Math.max(MIN_WIDTH, Math.round(saved.width)),
    height: Math.max(MIN_HEIGHT, Math.round(saved.height)),
    maximized: saved.maximized === true,
  };
  if (typeof saved.x === 'number' && typeof saved.y === 'number') {
    const x = Math.round(saved.x);
    const y = Math.round(saved.y);
    // Keep the position only when the window's title bar would land on some display.
    const visible = displays.some(
      (d) => x + 100 > d.x && x < d.x + d.width - 100 && y >= d.y && y < d.y + d.height - 50,
    );
    if (visible) Object.assign(bounds, { x, y });
  }
  return bounds;
}

/** Written to a temporary file and renamed, so a crash mid-write never leaves half a file. */
export function saveWindowState(path: string, bounds: WindowBounds): void {
  mkdirSync(dirname(path), { recursive: true });
  const temp = `${path}.tmp`;
  writeFileSync(temp, `${JSON.stringify(bounds)}\n`, 'utf8');
  renameSync(temp, path);
}

function isBounds(value: unknown): value is WindowBounds {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  const finite = (n: unknown) => typeof n === 'number' && Number.isFinite(n);
  return (
    finite(v.width) &&
    finite(v.height) &&
    (v.x === undefined || finite(v.x)) &&
    (v.y === undefined || finite(v.y)) &&
    (v.maximized === undefined || typeof v.maximized === 'boolean')
  );
}
