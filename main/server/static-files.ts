/**
 * Maps a request path onto a file of the renderer bundle (dist/renderer), for the web server
 * and the Electron protocol alike. Anything that tries to leave the folder is refused.
 */
import { realpathSync } from 'node:fs';
import { extname, join, resolve, sep } from 'node:path';

export const CONTENT_TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
  '.txt': 'text/plain; charset=utf-8',
};

export function contentTypeOf(path: string): string {
  return CONTENT_TYPES[extname(path).toLowerCase()] ?? 'application/octet-stream';
}

export type StaticResolution = { ok: true; path: string } | { ok: false; status: 400 | 403; reason: string };

/**
 * `rawPath` is the path as sent (before any URL normalisation), e.g. `/app.js` or
 * `/%2e%2e/package.json`. `/` is index.html. A `..` segment, a backslash or a NUL anywhere
 * is refused outright rather than normalised away: no honest page asks for one.
 */
export function resolveStaticPath(root: string, rawPath: string): StaticResolution {
  let decoded: string;
  try {
    decoded = decodeURIComponent(rawPath);
  } catch {
    return { ok: false, status: 400, reason: 'the path is not valid percent-encoding' };
  }
  if (!decoded.startsWith('/')) return { ok: false, status: 400, reason: 'the path must start with /' };
  if (decoded.includes('\0') || decoded.includes('\\'))
    return { ok: false, status: 403, reason: 'forbidden path' };
  const segments = decoded.split('/');
  if (segments.some((s) => s === '..' || s === '.'))
    return { ok: false, status: 403, reason: 'forbidden path' };
  if (segments.some((s) => s.startsWith('.') && s.length > 0)) {
    return { ok: false, status: 403, reason: 'hidden files are not served' };
  }
  const relative = decoded === '/' ? 'index.html' : decoded.slice(1);
  const base = resolve(root);
  const full = resolve(join(base, relative));
  if (full !== base && !full.startsWith(base + sep))
    return { ok: false, status: 403, reason: 'forbidden path' };
  return { ok: true, path: full };
}

/** A symlink inside the folder must not lead outside it either. */
export function staysInside(root: string, path: string): boolean {
  try {
    const base = realpathSync(root);
    const real = realpathSync(path);
    return real === base || real.startsWith(base + sep);
  } catch {
    return false;
  }
}
