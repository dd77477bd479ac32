/**
 * The Content-Security-Policy of every page Taperline serves (web mode and the Electron
 * protocol). Scripts and styles only from the app itself, no inline code, no plugins, no
 * framing; the only extra connection allowed is the WebSocket API of the page's own server.
 */

/** Directives shared by the web server, the Electron protocol and the `<meta>` in index.html. */
const BASE_DIRECTIVES = [
  "default-src 'self'",
  "script-src 'self'",
  "style-src 'self'",
  "img-src 'self' data:",
  "object-src 'none'",
  "base-uri 'none'",
];

/**
 * CSP header value. `wsHost` is `host:port` as the browser addressed the server; the web
 * mode allows `ws://` to exactly that, the Electron protocol (no WebSocket) passes null.
 */
export function contentSecurityPolicy(wsHost: string | null): string {
  const connect = wsHost === null ? "connect-src 'self'" : `connect-src 'self' ws://${wsHost}`;
  // frame-ancestors only works as a header, never in a <meta> tag.
  return [...BASE_DIRECTIVES, connect, "frame-ancestors 'none'"].join('; ');
}

/**
 * The policy the renderer's index.html carries in a `<meta http-equiv>` tag, for a page
 * opened some other way. Header and meta both apply, so the meta must not be stricter than
 * either mode needs: CSP Level 3 lets `'self'` match `ws:` to the page's own host and port.
 */
export const META_CSP = [...BASE_DIRECTIVES, "connect-src 'self'"].join('; ');

/** Other headers every response carries. */
export const SECURITY_HEADERS: Record<string, string> = {
  'X-Content-Type-Options': 'nosniff',
  'Referrer-Policy': 'no-referrer',
  'X-Frame-Options': 'DENY',
  'Cross-Origin-Opener-Policy': 'same-origin',
  'Cross-Origin-Resource-Policy': 'same-origin',
};

/**
 * The policy of a served report (Run or Batch). The report is one self-contained file that
 * draws its charts with inline scripts carrying the page's one-time nonce (its own <meta>
 * policy says the same) and loads nothing; `sandbox` gives it an opaque origin, so even its
 * own script cannot reach this server's API or cookie.
 */
export function reportCsp(html: string): string {
  const nonce = /script-src 'nonce-([A-Za-z0-9+/=]+)'/.exec(html)?.[1];
  return [
    "default-src 'none'",
    // A page without a nonce runs no script at all.
    nonce ? `script-src 'nonce-${nonce}'` : "script-src 'none'",
    "style-src 'unsafe-inline'",
    'img-src data:',
    "base-uri 'none'",
    "form-action 'none'",
    "frame-ancestors 'none'",
    'sandbox allow-scripts',
  ].join('; ');
}
