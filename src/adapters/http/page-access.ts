import { createHash, timingSafeEqual } from 'node:crypto';

/** Name of the cookie that carries the page token once the browser has shown it. */
export const TOKEN_COOKIE = 'sw_page_token';

/** True for addresses that only this machine can reach: 127.0.0.0/8, ::1, localhost. */
export function isLoopbackHost(host: string): boolean {
  const h = host.replace(/^\[|\]$/g, '').toLowerCase();
  return h === 'localhost' || h === '::1' || /^127(\.\d{1,3}){3}$/.test(h) || h === '::ffff:127.0.0.1';
}

/**
 * Refuses a server bound beyond loopback without a token (the caller stops the start). Pure.
 * `section` and `key` name the runtime setting: the live page's `host`, the metrics' `listen`.
 */
export function tokenProblem(host: string, token: string | null, section = 'live_page', key = 'host'): string | null {
  if (token !== null || isLoopbackHost(host)) return null;
  return `${section}.${key} ${host} is reachable from other machines: set ${section}.token_env or ${section}.token_file (the token never goes in the runtime file), or bind it to 127.0.0.1`;
}

/** The parts of a request the check reads. */
export interface AccessRequest {
  method: string;
  /** Path and query, as in the request line. */
  url: string;
  headers: { host?: string; authorization?: string; cookie?: string; origin?: string };
}

export type AccessVerdict =
  | { ok: true }
  /** The token came in the query: set it as a cookie and send the browser to the same path without it. */
  | { ok: true; redirect: string; setCookie: string }
  | { ok: false; status: 401 | 403 | 421; reason: string };

/** Same length digests, compared in constant time: the time taken says nothing about the token. */
function sameSecret(given: string, token: string): boolean {
  const a = createHash('sha256').update(given).digest();
  const b = createHash('sha256').update(token).digest();
  return timingSafeEqual(a, b);
}

function cookieValue(header: string | undefined, name: string): string | null {
  for (const part of (header ?? '').split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) {
      try { return decodeURIComponent(part.slice(eq + 1).trim()); } catch { return null; }
    }
  }
  return null;
}

/**
 * Decides whether a request may see the page, its events or acknowledge. Pure.
 * - Bound to loopback, the Host header must name a loopback address: a web page elsewhere that
 *   points its own name at 127.0.0.1 (DNS rebinding) is refused.
 * - A request that changes something (POST) must come from the page itself when the browser says
 *   where it comes from (Origin): another site cannot acknowledge through the user's browser.
 * - With a token: `Authorization: Bearer <token>`, the cookie, or `?token=` once (then kept as an
 *   HttpOnly cookie and removed from the address bar).
 */
export function checkPageAccess(req: AccessRequest, o: { token: string | null; boundHost: string }): AccessVerdict {
  const hostHeader = req.headers.host ?? '';
  const hostName = hostHeader.replace(/:\d+$/, '');
  if (isLoopbackHost(o.boundHost) && !isLoopbackHost(hostName)) {
    return { ok: false, status: 421, reason: `Host "${hostHeader}" is not this page's address` };
  }
  if (req.method !== 'GET' && req.method !== 'HEAD' && req.headers.origin !== undefined) {
    let originHost = '';
    try { originHost = new URL(req.headers.origin).host; } catch { /* stays empty: refused below */ }
    if (originHost !== hostHeader) return { ok: false, status: 403, reason: `request from another site (Origin ${req.headers.origin})` };
  }
  if (o.token === null) return { ok: true };
  const url = new URL(req.url, 'http://page.invalid');
  const bearer = /^Bearer\s+(.+)$/i.exec(req.headers.authorization ?? '')?.[1]?.trim();
  if (bearer !== undefined) return sameSecret(bearer, o.token) ? { ok: true } : { ok: false, status: 401, reason: 'wrong token' };
  const query = url.searchParams.get('token');
  if (query !== null) {
    if (!sameSecret(query, o.token)) return { ok: false, status: 401, reason: 'wrong token' };
    url.searchParams.delete('token');
    return { ok: true, redirect: url.pathname + url.search, setCookie: `${TOKEN_COOKIE}=${encodeURIComponent(o.token)}; HttpOnly; SameSite=Strict; Path=/` };
  }
  const cookie = cookieValue(req.headers.cookie, TOKEN_COOKIE);
  if (cookie !== null) return sameSecret(cookie, o.token) ? { ok: true } : { ok: false, status: 401, reason: 'wrong token' };
  return { ok: false, status: 401, reason: 'this page needs its token: open it once as /?token=<token>, or send Authorization: Bearer <token>' };
}
