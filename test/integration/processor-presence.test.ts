/**
 * The processor's presence on the broker, with `strainward run` as its own process against a real
 * Mosquitto (started here on a free loopback port): retained `online` heartbeats with counters, the
 * last will `offline` when the process is killed without a goodbye, `stopped` after SIGTERM.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { PresenceMessage } from '../../src/app/presence.js';
import { startMosquitto } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

const TOPIC = 'strainward/brannock-mere/processor/test-presence';

describe('processor presence', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => { broker = await startMosquitto(); });
  afterAll(async () => { await broker?.stop(); });

  async function startRun(): Promise<ChildProcess> {
    const dir = await mkdtemp(join(tmpdir(), 'sw-presence-'));
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-presence', [
      'presence: { every_s: 0.3 }',
      ...filesUnder(dir),
    ]);
    return spawn(process.execPath, ['bin/strainward.mjs', 'run', '-c', runtime, '--status-every', '0'], { stdio: ['ignore', 'ignore', 'ignore'] });
  }

  type Seen = PresenceMessage & { retainedCopy: boolean };
  /** Every presence message from now on; `retainedCopy`: the broker's stored one, sent on subscribing. */
  async function watch(): Promise<{ seen: Seen[]; until: (p: (m: Seen) => boolean) => Promise<Seen>; close: () => Promise<void> }> {
    const client = await mqtt.connectAsync(broker.url, { clientId: `test-presence-watch-${Math.random()}` });
    const seen: Seen[] = [];
    client.on('message', (_t, payload, packet) => seen.push({ ...(JSON.parse(payload.toString('utf8')) as PresenceMessage), retainedCopy: packet.retain }));
    await client.subscribeAsync(TOPIC, { qos: 1 });
    const until = async (p: (m: Seen) => boolean) => {
      const deadline = Date.now() + 20_000;
      for (;;) {
        const hit = seen.find(p);
        if (hit) return hit;
        if (Date.now() > deadline) throw new Error(`no such presence message; seen ${JSON.stringify(seen)}`);
        await new Promise((r) => setTimeout(r, 20));
      }
    };
    return { seen, until, close: () => client.endAsync() };
  }

  it('heartbeats online with its counters, and the broker says offline when the process is killed', async () => {
    const w = await watch();
    const child = await startRun();
    const online = await w.until((m) => m.state === 'online' && !m.retainedCopy);
    expect(online).toMatchObject({ processor: 'test-presence', structure: 'brannock-mere', every_s: 0.3, frames: 0, rejected_messages: 0, database_reachable: null });
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-presence-logger' });
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: Date.now(), values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    await pub.endAsync();
    const counted = await w.until((m) => m.state === 'online' && m.frames === 1);
    // Heartbeats come about every 0.3 s: the one that counted the scan is recent.
    expect(Date.now() - Date.parse(counted.at)).toBeLessThan(5_000);
    const killedAt = Date.now();
    child.kill('SIGKILL');
    const offline = await w.until((m) => m.state === 'offline' && !m.retainedCopy);
    expect(offline).toMatchObject({ processor: 'test-presence', structure: 'brannock-mere' });
    expect(Date.now() - killedAt).toBeLessThan(5_000); // the socket closed: the will goes out at once, not after keepalive
    await w.close();
    // Retained: whoever looks later sees it too.
    const later = await watch();
    expect(await later.until(() => true)).toMatchObject({ state: 'offline', retainedCopy: true });
    await later.close();
  });

  it('says stopped, retained, after an orderly stop (no will)', async () => {
    const w = await watch();
    const child = await startRun();
    await w.until((m) => m.state === 'online' && !m.retainedCopy);
    child.kill('SIGTERM');
    expect(await new Promise((r) => child.once('exit', r))).toBe(0);
    await w.until((m) => m.state === 'stopped' && !m.retainedCopy);
    await new Promise((r) => setTimeout(r, 500));
    // The earlier test's retained `offline` may come first on subscribing; no will is sent after this stop.
    expect(w.seen.filter((m) => m.state === 'offline' && !m.retainedCopy)).toEqual([]);
    await w.close();
    const later = await watch();
    expect(await later.until(() => true)).toMatchObject({ state: 'stopped', retainedCopy: true });
    await later.close();
  });
});
