/**
 * Simulated readings are never taken in silently. The simulator (its own process) refuses a broker
 * beyond loopback unless told (exit 2), and marks every message `synthetic: true`; the live job,
 * against a real Mosquitto started here on a free loopback port, warns once per logger and lists
 * the loggers in its presence message, which `status` prints as a warning.
 */
import { execFile } from 'node:child_process';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { startLive } from '../../src/app/live.js';
import { main } from '../../src/cli/main.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { filesUnder, writeRuntimeFile } from '../support/runtime-file.js';

const run = promisify(execFile);
const simulator = (args: string[]) => run(process.execPath, ['--import', 'tsx', 'simulators/brannock-mere.ts', ...args], { timeout: 60_000 });

let dir = '';
let broker: MosquittoServer;
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'sw-synthetic-'));
  broker = await startMosquitto();
});
afterAll(async () => {
  await broker?.stop();
  await rm(dir, { recursive: true, force: true });
});

async function until(what: string, ok: () => boolean, ms = 20_000): Promise<void> {
  const deadline = Date.now() + ms;
  while (!ok()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

describe('synthetic data', () => {
  it('the simulator refuses a broker that is not on loopback: exit 2, the reason and the option that allows it', async () => {
    // 192.0.2.1 is a documentation address (RFC 5737): refused before any connection is tried.
    const r = await simulator(['--broker', 'mqtt://192.0.2.1:1883', '--duration-s', '1', '--out', join(dir, 'refused')])
      .then(() => ({ code: 0, stderr: '' }), (e: { code: number; stderr: string }) => ({ code: e.code, stderr: e.stderr }));
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--broker: mqtt://192.0.2.1:1883 is not on this machine (loopback)');
    expect(r.stderr).toContain('--allow-remote-broker');
  }, 60_000);

  it('the live job warns once per logger sending synthetic messages, and lists them in presence and status', async () => {
    const runtime = await writeRuntimeFile(dir, broker.url, 'test-synthetic', ['presence: { every_s: 0.3 }', 'ingest: { max_future_s: 30 }', ...filesUnder(dir)]);
    const warned: Array<{ event: string; detail?: Record<string, unknown> }> = [];
    const live = await startLive(await loadRuntimeFile(runtime), { now: Date.now, log: () => {}, warn: (event, detail) => warned.push({ event, detail }) });
    let presence: { synthetic_loggers?: string[] } = {};
    let st = { code: -1, out: '' };
    let loggers: string[] = [];
    try {
      // Two seconds of the deck, published as fast as the broker takes them.
      const out = join(dir, 'sim');
      await simulator(['--broker', broker.url, '--start', 'now', '--duration-s', '2', '--faults', 'none', '--messages', '--out', out]);
      const topics = (await readFile(join(out, 'messages.ndjson'), 'utf8')).trim().split('\n').map((l) => (JSON.parse(l) as { topic: string }).topic);
      loggers = [...new Set(topics.map((t) => t.split('/')[2]))].sort();
      expect(topics.length).toBeGreaterThan(loggers.length); // more than one message per logger: the warning must not repeat
      await until('a synthetic warning per logger', () => warned.filter((w) => w.event === 'synthetic_data').length >= loggers.length);
      const watcher = await mqtt.connectAsync(broker.url, { clientId: 'test-synthetic-watch', reconnectPeriod: 0 });
      watcher.on('message', (_t, p) => { presence = JSON.parse(p.toString('utf8')) as typeof presence; });
      await watcher.subscribeAsync('strainward/brannock-mere/processor/test-synthetic', { qos: 1 });
      await until('presence listing the loggers', () => (presence.synthetic_loggers ?? []).length === loggers.length);
      await watcher.endAsync();
      let text = '';
      const o = vi.spyOn(process.stdout, 'write').mockImplementation((c) => { text += String(c); return true; });
      try {
        st = { code: await main(['node', 'strainward', 'status', '-c', runtime, '--wait-ms', '400']), out: '' };
      } finally {
        o.mockRestore();
      }
      st.out = text;
    } finally {
      await live.stop();
    }
    expect(loggers).toEqual(['lg-pier', 'lg-slab', 'lg-span1', 'lg-thermal']);
    const synthetic = warned.filter((w) => w.event === 'synthetic_data');
    expect(synthetic.map((w) => w.detail!.logger).sort()).toEqual(loggers); // once each
    expect(synthetic[0].detail!.reason).toMatch(/^its messages say synthetic: true \(simulated readings\)/);
    expect(presence.synthetic_loggers).toEqual(loggers);
    expect(st.code).toBe(0);
    expect(st.out).toContain(`test-synthetic  WARNING: SYNTHETIC (simulated) data from ${loggers.join(', ')}`);
  }, 90_000);
});
