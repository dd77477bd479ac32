/**
 * What the `taperline://app/` protocol answers: files of the renderer bundle with the app's
 * CSP header, nothing outside the bundle, nothing from any other host.
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { contentSecurityPolicy, SECURITY_HEADERS } from '../server/csp';
import { contentTypeOf, resolveStaticPath, staysInside } from '../server/static-files';
import { APP_HOST, APP_SCHEME } from './security';

export interface ProtocolAnswer {
  status: number;
  headers: Record<string, string>;
  body: Buffer | string;
}

export function answerAppRequest(requestUrl: string, rendererDir: string): ProtocolAnswer {
  const headers = { ...SECURITY_HEADERS, 'Content-Security-Policy': contentSecurityPolicy(null) };
  const text = (status: number, message: string): ProtocolAnswer => ({
    status,
    headers: { ...headers, 'Content-Type': 'text/plain; charset=utf-8' },
    body: `${message}\n`,
  });
  let url: URL;
  try {
    url = new URL(requestUrl);
  } catch {
    return text(400, 'bad URL');
  }
  if (url.protocol !== `${APP_SCHEME}:` || url.host !== APP_HOST) return text(403, 'not an app URL');
  // The raw path, before URL normalisation folded away any `..`.
  const afterHost = requestUrl.slice(`${APP_SCHEME}://${APP_HOST}`.length).split(/[?#]/)[0] || '/';
  const resolved = resolveStaticPath(rendererDir, afterHost);
  if (!resolved.ok) return text(resolved.status, resolved.reason);
  if (
    !existsSync(resolved.path) ||
    !statSync(resolved.path).isFile() ||
    !staysInside(rendererDir, resolved.path)
  ) {
    return text(404, 'not found');
  }
  return {
    status: 200,
    headers: { ...headers, 'Content-Type': contentTypeOf(resolved.path) },
    body: readFileSync(resolved.path),
  };
}
