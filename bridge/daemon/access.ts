/**
 * Who may reach the daemon's web side (the overlay and its files, /events,
 * /health). By default it listens on 127.0.0.1, this machine only. `--host`
 * with an address other machines reach shows them what is being played,
 * live, so it needs `--token` as well; and whenever a token is given, every
 * request must carry it: `?token=`, `Authorization: Bearer`, or the cookie
 * the overlay page is given when opened with `?token=` (its own script and
 * style cannot carry a query). Tokens are compared in constant time.
 *
 * @example
 *   checkExposure('0.0.0.0', null)     // throws UsageError: --host 0.0.0.0 lets other machines … needs --token SECRET too
 *   isLoopback('127.0.0.1')            // → true
 *   const gate = tokenGate('stage-left-0427');
 *   gate.allows(req, 9751)             // → true when req carries the token
 *   gate.cookie(req, 9751)             // → 'earwitness-token-9751=stage-left-0427; HttpOnly; SameSite=Strict; Path=/' after ?token=
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import { isIP } from 'node:net';
import { UsageError } from '../formats/user-error.js';

export const DEFAULT_HOST = '127.0.0.1';
/** RFC 3986 unreserved characters, so a token stands in a URL as it is. */
const TOKEN = /^[A-Za-z0-9._~-]{12,256}$/;
export const TOKEN_RULE = 'at least 12 (at most 256) letters, digits, ".", "_", "~" or "-"';

/** 127.0.0.0/8, ::1 (and 127.x written as an IPv4-mapped IPv6 address), localhost. */
export function isLoopback(host: string): boolean {
  const v4 = host.startsWith('::ffff:') ? host.slice(7) : host;
  return host === 'localhost' || host === '::1' || (isIP(v4) === 4 && v4.startsWith('127.'));
}

/** 0.0.0.0 or ::, every address of this machine. */
export const isWildcard = (host: string): boolean => host === '0.0.0.0' || host === '::';

/** Checks `--host` and `--token` together; throws UsageError saying what is wrong and why. */
export function checkExposure(host: string, token: string | null): void {
  if (host !== 'localhost' && isIP(host) === 0) {
    throw new UsageError(`--host ${host}: not an IP address; give 127.0.0.1 (the default: this machine only), an address of one of this machine's network interfaces, or 0.0.0.0 for all of them`);
  }
  if (token !== null && !TOKEN.test(token)) throw new UsageError(`--token: give ${TOKEN_RULE}, so it can stand in a URL as it is (got ${token.length} characters)`);
  if (!isLoopback(host) && token === null) {
    throw new UsageError(`--host ${host} lets other machines reach the overlay, /events and /health, and so hear what you play as you play it; it needs --token SECRET too (${TOKEN_RULE}), which every request must then carry`);
  }
}

/** The host as it appears in a URL or a Host header: IPv6 in brackets. */
export const urlHost = (host: string): string => (isIP(host) === 6 ? `[${host}]` : host);

const digest = (s: string): Buffer => createHash('sha256').update(s).digest();
/** Constant time, whatever the lengths: both sides are hashed first. */
const same = (given: string, token: string): boolean => timingSafeEqual(digest(given), digest(token));

const cookieName = (port: number): string => `earwitness-token-${port}`;

function queryToken(req: IncomingMessage): string | null {
  const url = req.url ?? '';
  const q = url.indexOf('?');
  return q < 0 ? null : new URLSearchParams(url.slice(q + 1)).get('token');
}

function bearer(req: IncomingMessage): string | null {
  const m = /^Bearer ([^\s]+)$/i.exec(req.headers.authorization ?? '');
  return m ? m[1] : null;
}

function cookie(req: IncomingMessage, port: number): string | null {
  const name = `${cookieName(port)}=`;
  for (const part of (req.headers.cookie ?? '').split(';')) {
    const p = part.trim();
    if (p.startsWith(name)) return p.slice(name.length);
  }
  return null;
}

export interface TokenGate {
  /** Whether the request may be answered: always, without a token. */
  allows(req: IncomingMessage, port: number): boolean;
  /** A Set-Cookie value when the request brought the token in its query, else null. */
  cookie(req: IncomingMessage, port: number): string | null;
}

export function tokenGate(token: string | null): TokenGate {
  return {
    allows(req, port) {
      if (token === null) return true;
      return [queryToken(req), bearer(req), cookie(req, port)].some((t) => t !== null && same(t, token));
    },
    cookie(req, port) {
      const q = token === null ? null : queryToken(req);
      return q !== null && same(q, token!) ? `${cookieName(port)}=${token}; HttpOnly; SameSite=Strict; Path=/` : null;
    },
  };
}
