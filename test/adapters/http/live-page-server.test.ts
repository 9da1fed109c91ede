/**
 * The live page's HTTP edge on a real loopback server (node's http module, a free port): the
 * token, the acknowledgement body's validation, the event stream. The processor behind it is a
 * plain function here; the whole path is tested in test/integration/live-page-browser.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startLivePageServer, type LivePageServer } from '../../../src/adapters/http/live-page-server.js';
import { openLivePage } from '../../../src/app/live-page/live-page.js';
import { alarmLookups } from '../../../src/app/lookups.js';
import { loadStructureFile } from '../../../src/config/load.js';

const TOKEN = 'test-token-not-secret';

describe('live page server', () => {
  let server: LivePageServer;
  const acks: unknown[] = [];

  beforeAll(async () => {
    server = await startLivePageServer({
      host: '127.0.0.1', port: 0, token: TOKEN, log: () => {},
      assets: { html: '<!doctype html><title>t</title>', script: 'void 0;', style: 'body{}' },
      snapshot: () => ({ hello: 'page' }),
      acknowledge: async (cmd) => {
        acks.push(cmd);
        return cmd.user === 'allowed' ? { outcome: 'acknowledged', alarmId: cmd.alarm_id, user: cmd.user } : { outcome: 'refused', code: 'user_not_allowed', reason: 'not on the list' };
      },
    });
  });
  afterAll(async () => { await server.close(); });

  const auth = { authorization: `Bearer ${TOKEN}` };
  const post = (body: string, headers: Record<string, string> = {}) => fetch(new URL('ack', server.url), {
    method: 'POST', body, headers: { ...auth, 'content-type': 'application/json', ...headers },
  });

  it('serves nothing without the token, the page with it', async () => {
    expect(server.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/$/);
    const refused = await fetch(server.url);
    expect(refused.status).toBe(401);
    expect(await refused.text()).not.toContain('<title>');
    const ok = await fetch(server.url, { headers: auth });
    expect(ok.status).toBe(200);
    expect(ok.headers.get('content-security-policy')).toContain("script-src 'self'");
    expect(await ok.text()).toContain('<title>t</title>');
    // The token in the address once: kept as a cookie, removed from the address.
    const viaQuery = await fetch(new URL(`?token=${TOKEN}`, server.url), { redirect: 'manual' });
    expect(viaQuery.status).toBe(303);
    expect(viaQuery.headers.get('location')).toBe('/');
    expect(viaQuery.headers.get('set-cookie')).toContain('HttpOnly');
  });

  it('validates the acknowledgement body and names the field', async () => {
    const missing = await post(JSON.stringify({ alarm_id: 'a1', user: 'allowed' }));
    expect(missing.status).toBe(400);
    expect((await missing.json()).error).toMatch(/^reason: /);
    const noUser = await post(JSON.stringify({ alarm_id: 'a1', reason: 'r' }));
    expect(noUser.status).toBe(400);
    expect((await noUser.json()).error).toMatch(/^user: /);
    const extra = await post(JSON.stringify({ alarm_id: 'a1', user: 'allowed', reason: 'r', level: 'none' }));
    expect(extra.status).toBe(400);
    expect((await post('{not json')).status).toBe(400);
    expect((await post('x=1', { 'content-type': 'application/x-www-form-urlencoded' })).status).toBe(415);
    expect((await post(JSON.stringify({ alarm_id: 'a1', user: 'allowed', reason: 'r' }), { origin: 'http://elsewhere.example.invalid' })).status).toBe(403);
    expect(acks).toEqual([]);
  });

  it('answers with the processor\'s verdict', async () => {
    const ok = await post(JSON.stringify({ alarm_id: 'a1', user: 'allowed', reason: 'checked' }));
    expect(ok.status).toBe(200);
    expect(await ok.json()).toEqual({ outcome: 'acknowledged', alarmId: 'a1', user: 'allowed' });
    const no = await post(JSON.stringify({ alarm_id: 'a1', user: 'someone', reason: 'checked' }));
    expect(no.status).toBe(409);
    expect(await no.json()).toEqual({ outcome: 'refused', code: 'user_not_allowed', reason: 'not on the list' });
    expect(acks).toEqual([{ alarm_id: 'a1', user: 'allowed', reason: 'checked' }, { alarm_id: 'a1', user: 'someone', reason: 'checked' }]);
  });

  it('streams a snapshot, then what is broadcast', async () => {
    const res = await fetch(new URL('events', server.url), { headers: auth });
    expect(res.headers.get('content-type')).toContain('text/event-stream');
    const reader = res.body!.getReader();
    let text = '';
    const until = async (s: string) => { while (!text.includes(s)) text += new TextDecoder().decode((await reader.read()).value); };
    await until('event: snapshot\ndata: {"hello":"page"}\n\n');
    expect(server.clients()).toBe(1);
    server.broadcast('update', { n: 2 });
    await until('event: update\ndata: {"n":2}\n\n');
    await reader.cancel();
  });
});

describe('live page start', () => {
  it('refuses to listen beyond loopback without a token, and names the settings', async () => {
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const deps = {
      structure, lookups: alarmLookups(structure), now: Date.now, log: () => {}, commandTopic: null, submitCommand: () => {},
      sample: () => ({ messages: 0, frames: 0, results: 0, rejected: 0, writeErrors: 0, heldAcks: 0, databaseConfigured: false, databaseReachable: null, spoolFillRatio: null }),
    };
    await expect(openLivePage({ host: '0.0.0.0', port: 0, trend_s: 60, push_every_ms: 1000 }, '.', deps)).rejects.toThrow(/reachable from other machines: set live_page\.token_env or live_page\.token_file/);
    // A token variable that is not set stops the start too, naming the variable.
    await expect(openLivePage({ host: '127.0.0.1', port: 0, trend_s: 60, push_every_ms: 1000, token_env: 'SW_TEST_UNSET_PAGE_TOKEN' }, '.', deps)).rejects.toThrow(/SW_TEST_UNSET_PAGE_TOKEN/);
  });
});
