/**
 * Who may talk to `taperline serve`. A loopback bind is reachable only from this machine, so
 * it checks only that the Host header names a loopback address (a page on another site that
 * resolves its own name to 127.0.0.1 is refused). Any other bind is reachable from the
 * network and requires the session token on every request: in the query (`?token=`) of the
 * first page load, then in a same-site cookie the server sets, which the page's scripts,
 * styles and WebSocket send back on their own.
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

/** The host name part of a Host header (`127.0.0.1:8080`, `[::1]:8080`, `localhost`). */
export function hostnameOf(hostHeader: string): string {
  if (hostHeader.startsWith('[')) {
    const end = hostHeader.indexOf(']');
    return end > 0 ? hostHeader.slice(0, end + 1) : hostHeader;
  }
  const colon = hostHeader.lastIndexOf(':');
  return colon >= 0 ? hostHeader.slice(0, colon) : hostHeader;
}

export type AccessDecision =
  { ok: true; tokenFromQuery: boolean } | { ok: false; status: 400 | 403; reason: string };

export interface AccessPolicy {
  /** null = no token required (loopback bind without one). */
  token: string | null;
  check(req: IncomingMessage, url: URL): AccessDecision;
  /** Extra checks of a WebSocket upgrade: the Origin must be this server's own. */
  checkUpgrade(req: IncomingMessage, url: URL): AccessDecision;
}

export function createAccessPolicy(bindHost: string, token: string | null): AccessPolicy {
  const loopbackOnly = isLoopbackHost(bindHost);
  if (!loopbackOnly && !token) {
    throw new Error(`binding ${bindHost} makes Taperline reachable from the network, which needs a token`);
  }
  const expected = token ? Buffer.from(token) : null;
  const matches = (candidate: string | undefined): boolean => {
    if (!expected || candidate === undefined) return false;
    const given = Buffer.from(candidate);
    return given.length === expected.length && timingSafeEqual(given, expected);
  };

  const check = (req: IncomingMessage, url: URL): AccessDecision => {
    const host = req.headers.host;
    if (!host) return { ok: false, status: 400, reason: 'the request has no Host header' };
    if (loopbackOnly && !isLoopbackHost(hostnameOf(host))) {
      return {
        ok: false,
        status: 403,
        reason: `this server answers only to a loopback address, not to "${host}"`,
      };
    }
    if (!expected) return { ok: true, tokenFromQuery: false };
    if (matches(url.searchParams.get(TOKEN_QUERY) ?? undefined)) return { ok: true, tokenFromQuery: true };
    if (matches(readCookie(req.headers.cookie, TOKEN_COOKIE))) return { ok: true, tokenFromQuery: false };
    return {
      ok: false,
      status: 403,
      reason:
        'this server needs its access token: open the address that `taperline serve` printed, with ?token=',
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
        return { ok: false, status: 403, reason: `WebSocket from another site (${origin}) refused` };
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
