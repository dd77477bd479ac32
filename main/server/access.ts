/**
 * Who may talk to `taperline serve`. Every request needs the session token, loopback
 * included (any local program, or a page another site rebinds to 127.0.0.1, could otherwise
 * add stations, write to ports and delete runs): in the query (`?token=`) of the first page
 * load, then in a same-site cookie the server sets, which the page's scripts, styles and
 * WebSocket send back on their own. A loopback bind also answers only to a Host header that
 * is, strictly parsed, a loopback name. The Electron shell talks over its child-process IPC
 * channel, not HTTP, and needs no token.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import { isIP } from 'node:net';

export const TOKEN_COOKIE = 'taperline_token';
export const TOKEN_QUERY = 'token';

export function generateToken(): string {
  return randomBytes(24).toString('base64url');
}

/** 127.0.0.0/8, ::1 and localhost. */
export function isLoopbackHost(host: string): boolean {
  const bare = host.startsWith('[') && host.endsWith(']') ? host.slice(1, -1) : host;
  if (bare === 'localhost' || bare === '::1' || bare === '::ffff:127.0.0.1') return true;
  return isIP(bare) === 4 && bare.startsWith('127.');
}

/**
 * The host name of a Host header, parsed strictly: `name[:port]` or `[ipv6][:port]` and
 * nothing else (RFC 9110 section 7.2: uri-host [ ":" port ]). Anything else (userinfo, a path,
 * `127.0.0.1:47200@evil.example`) is null, and refused.
 */
export function hostnameOf(hostHeader: string): string | null {
  const m = /^(?:\[([0-9A-Fa-f:.]+)\]|([A-Za-z0-9.-]+))(?::(\d{1,5}))?$/.exec(hostHeader);
  if (!m) return null;
  if (m[3] !== undefined && Number(m[3]) > 65535) return null;
  return m[1] !== undefined ? `[${m[1]}]` : m[2];
}

export type AccessDecision =
  { ok: true; tokenFromQuery: boolean } | { ok: false; status: 400 | 403; reason: string };

export interface AccessPolicy {
  /** Required on every request, loopback included (query once, then the cookie). */
  token: string;
  check(req: IncomingMessage, url: URL): AccessDecision;
  /** Extra checks of a WebSocket upgrade: the Origin must be this server's own. */
  checkUpgrade(req: IncomingMessage, url: URL): AccessDecision;
}

export function createAccessPolicy(bindHost: string, token: string): AccessPolicy {
  const loopbackOnly = isLoopbackHost(bindHost);
  if (!token) throw new Error('the server needs an access token');
  const expected = Buffer.from(token);
  const matches = (candidate: string | undefined): boolean => {
    if (candidate === undefined) return false;
    const given = Buffer.from(candidate);
    return given.length === expected.length && timingSafeEqual(given, expected);
  };

  const check = (req: IncomingMessage, url: URL): AccessDecision => {
    const host = req.headers.host;
    if (!host) return { ok: false, status: 400, reason: 'the request has no Host header' };
    const name = hostnameOf(host);
    // The Host is never echoed: a refusal page must not carry what a hostile page chose.
    if (name === null)
      return { ok: false, status: 400, reason: 'the Host header is not a host name and port' };
    if (loopbackOnly && !isLoopbackHost(name)) {
      return {
        ok: false,
        status: 403,
        reason: 'this server answers only to a loopback address (127.0.0.1, ::1, localhost)',
      };
    }
    // The token is required on loopback too: any local program could otherwise drive the API.
    if (matches(url.searchParams.get(TOKEN_QUERY) ?? undefined)) return { ok: true, tokenFromQuery: true };
    if (matches(readCookie(req.headers.cookie, TOKEN_COOKIE))) return { ok: true, tokenFromQuery: false };
    return {
      ok: false,
      status: 403,
      reason:
        'this server needs its access token: open the address that `taperline serve` printed (it ends in ?token=…)',
    };
  };

  return {
    token,
    check,
    checkUpgrade(req, url) {
      const decision = check(req, url);
      if (!decision.ok) return decision;
      const origin = req.headers.origin;
      // Browsers always send Origin on a WebSocket upgrade; tools and tests may not.
      if (origin !== undefined && origin !== `http://${req.headers.host}`) {
        return { ok: false, status: 403, reason: 'a WebSocket from another site is refused' };
      }
      return decision;
    },
  };
}

/** The cookie that carries the token after the first page load (HttpOnly: scripts never see it). */
export function tokenCookie(token: string): string {
  return `${TOKEN_COOKIE}=${token}; HttpOnly; SameSite=Strict; Path=/`;
}

function readCookie(header: string | undefined, name: string): string | undefined {
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim();
  }
  return undefined;
}
