import { describe, expect, it } from 'vitest';
import { checkPageAccess, isLoopbackHost, tokenProblem, TOKEN_COOKIE } from '../../../src/adapters/http/page-access.js';

const TOKEN = 'k3y-with;odd=chars';
const req = (over: { method?: string; url?: string; headers?: Record<string, string> } = {}) => ({
  method: over.method ?? 'GET', url: over.url ?? '/', headers: { host: '10.1.2.3:8480', ...over.headers },
});

describe('live page access', () => {
  it('knows loopback addresses', () => {
    for (const h of ['127.0.0.1', '127.3.4.5', 'localhost', '::1', '[::1]', 'LOCALHOST']) expect(isLoopbackHost(h), h).toBe(true);
    for (const h of ['0.0.0.0', '10.0.0.1', '::', 'example.invalid', '128.0.0.1']) expect(isLoopbackHost(h), h).toBe(false);
  });

  it('refuses to serve beyond loopback without a token', () => {
    expect(tokenProblem('0.0.0.0', null)).toMatch(/live_page\.token_env or live_page\.token_file/);
    expect(tokenProblem('0.0.0.0', TOKEN)).toBeNull();
    expect(tokenProblem('127.0.0.1', null)).toBeNull();
  });

  it('with a token: refuses none or a wrong one, takes a bearer header, the cookie, or the query once', () => {
    const o = { token: TOKEN, boundHost: '0.0.0.0' };
    expect(checkPageAccess(req(), o)).toMatchObject({ ok: false, status: 401, reason: expect.stringContaining('needs its token') });
    expect(checkPageAccess(req({ headers: { authorization: 'Bearer nope' } }), o)).toEqual({ ok: false, status: 401, reason: 'wrong token' });
    expect(checkPageAccess(req({ headers: { authorization: `Bearer ${TOKEN}` } }), o)).toEqual({ ok: true });
    expect(checkPageAccess(req({ headers: { cookie: `other=1; ${TOKEN_COOKIE}=${encodeURIComponent(TOKEN)}` } }), o)).toEqual({ ok: true });
    expect(checkPageAccess(req({ headers: { cookie: `${TOKEN_COOKIE}=${encodeURIComponent(`${TOKEN}x`)}` } }), o)).toMatchObject({ ok: false, status: 401 });
    expect(checkPageAccess(req({ url: '/?token=wrong' }), o)).toMatchObject({ ok: false, status: 401 });
    const viaQuery = checkPageAccess(req({ url: `/?view=1&token=${encodeURIComponent(TOKEN)}` }), o);
    expect(viaQuery).toEqual({ ok: true, redirect: '/?view=1', setCookie: `${TOKEN_COOKIE}=${encodeURIComponent(TOKEN)}; HttpOnly; SameSite=Strict; Path=/` });
  });

  it('on loopback: no token needed, but the Host must be loopback (no rebinding) and a POST must come from the page itself', () => {
    const o = { token: null, boundHost: '127.0.0.1' };
    expect(checkPageAccess(req({ headers: { host: '127.0.0.1:8480' } }), o)).toEqual({ ok: true });
    expect(checkPageAccess(req({ headers: { host: 'localhost:8480' } }), o)).toEqual({ ok: true });
    expect(checkPageAccess(req({ headers: { host: 'rebound.example.invalid:8480' } }), o)).toMatchObject({ ok: false, status: 421 });
    const post = (origin: string) => checkPageAccess(req({ method: 'POST', url: '/ack', headers: { host: '127.0.0.1:8480', origin } }), o);
    expect(post('http://127.0.0.1:8480')).toEqual({ ok: true });
    expect(post('http://elsewhere.example.invalid')).toMatchObject({ ok: false, status: 403 });
    expect(post('null')).toMatchObject({ ok: false, status: 403 });
  });
});
