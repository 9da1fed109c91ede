/**
 * The live job's intake at its held-acknowledgement limit, against a real Mosquitto started here
 * (free loopback port, `max_inflight_messages` equal to `mqtt.max_held_acks` as the README asks),
 * results to line-protocol files. A backlog of 10x the limit queued in the persistent session
 * before the processor starts, and a burst of 3x the limit of refused messages followed by good
 * scans: every message is taken, none is lost, and no more than the limit is held. MQTT 5 and 3.1.1.
 */
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import { loadStructureFile } from '../../src/config/load.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';

const LIMIT = 50;
const SCAN_TOPIC = 'strainward/brannock-mere/lg-span1/scan';
const T0 = Date.UTC(2026, 10, 21, 3, 0, 0);

const thermal = () => ({ topic: 'strainward/brannock-mere/lg-thermal/scan', payload: JSON.stringify({ ts: T0 - 1000, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }) });
const scan = (seq: number) => ({ topic: SCAN_TOPIC, payload: JSON.stringify({ ts: T0 + 100 * seq, seq, values: { ch01: 0, ch02: 0, ch03: 0, ch04: 0 } }) });
/** Refused by the decoder: ch99 is no channel of lg-span1. */
const refused = (k: number) => ({ topic: SCAN_TOPIC, payload: JSON.stringify({ ts: T0 + k, values: { ch99: k } }) });

async function publishAll(url: string, messages: Array<{ topic: string; payload: string }>): Promise<void> {
  const pub = await mqtt.connectAsync(url, { clientId: `test-intake-loggers-${Math.random().toString(16).slice(2)}`, reconnectPeriod: 0 });
  await Promise.all(messages.map((m) => pub.publishAsync(m.topic, m.payload, { qos: 1 })));
  await pub.endAsync();
}

async function until(check: () => boolean | Promise<boolean>, ms: number): Promise<void> {
  const deadline = Date.now() + ms;
  while (!(await check()) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
}

/** Distinct `seq` of lg-span1's raw records, and the number of flange-south-mid1 results, in the files. */
async function written(lpDir: string): Promise<{ rawSeqs: Set<number>; rawLines: number; results: number }> {
  const files = (await readdir(lpDir).catch(() => [] as string[])).filter((f) => f.endsWith('.lp'));
  // Whole lines only: a file may be read while a write is appending to it.
  const texts = await Promise.all(files.map((f) => readFile(join(lpDir, f), 'utf8')));
  const points = decodeLines(texts.map((t) => t.slice(0, t.lastIndexOf('\n') + 1)).join(''));
  const raw = points.filter((p) => p.measurement === 'sw_raw' && p.tags.logger === 'lg-span1');
  return {
    rawSeqs: new Set(raw.map((p) => p.fields.seq)),
    rawLines: raw.length,
    results: points.filter((p) => p.measurement === 'sw_result' && p.tags.group === 'flange-south-mid1').length,
  };
}

describe.each([5, 4] as const)('live intake at mqtt.max_held_acks, MQTT protocol level %i', (protocolVersion) => {
  let broker: MosquittoServer;
  let structure: CompiledStructure;
  let dir: string;
  let warnings: string[] = [];

  beforeAll(async () => {
    broker = await startMosquitto({ maxInflightMessages: LIMIT });
    structure = await loadStructureFile('config/brannock-mere.yaml');
  });
  afterAll(async () => {
    await broker?.stop();
    if (dir) await rm(dir, { recursive: true, force: true });
  });

  async function start(clientId: string): Promise<LiveProcessor> {
    warnings = [];
    dir ??= await mkdtemp(join(tmpdir(), 'sw-intake-'));
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      // keepalive 5 s: a stalled connection would time out and reconnect well inside the test's wait
      mqtt: { url: broker.url, client_id: clientId, protocol_version: protocolVersion, fallback_to_v311: false, max_held_acks: LIMIT, keepalive_s: 5 },
      line_protocol: { dir: join(dir, clientId, 'lp') },
      // Acknowledgements wait for the capture's group commit: 250 ms of them is longer than the broker
      // takes to send a window's worth, so the window fills whatever the speed of the machine (the
      // pauses counted below), rather than only when processing happens to fall behind.
      capture: { dir: join(dir, clientId, 'capture'), flush_every_ms: 250 },
      dead_letters: { file: join(dir, clientId, 'dl.ndjson') },
      alarms: { state_file: join(dir, clientId, 'alarm-state.json'), log_file: join(dir, clientId, 'alarms.ndjson') },
      tick_ms: 200,
    }, 'test');
    return startLive({ runtime: rc, structure, baseDir: dir }, {
      now: Date.now,
      log: (event, detail) => { if (event === 'mqtt_window_exceeded') warnings.push(JSON.stringify(detail)); },
    });
  }

  it(`connects, subscribes and processes a backlog of ${10 * LIMIT} scans queued before it started`, async () => {
    const clientId = `test-backlog-v${protocolVersion}`;
    await (await start(clientId)).stop(); // the persistent session exists; the processor is away
    await publishAll(broker.url, [thermal(), ...Array.from({ length: 10 * LIMIT }, (_, seq) => scan(seq))]);

    const live = await start(clientId); // resolves only once connected and subscribed
    const lpDir = join(dir, clientId, 'lp');
    await until(async () => (await written(lpDir)).rawSeqs.size >= 10 * LIMIT, 30_000);
    const mqttStats = live.connection.stats();
    await live.stop();

    const w = await written(lpDir);
    expect(w.rawSeqs.size).toBe(10 * LIMIT); // 0 lost
    expect(w.results).toBeGreaterThanOrEqual(10 * LIMIT);
    expect(mqttStats.connects).toBe(1); // no keep-alive timeout, no reconnect
    // Mosquitto 2.0.11 keeps to the window only until the first PUBACK, then sends more; intake
    // stops reading at the window, and nothing it awaits (its own publishes go out on the
    // outbound connection) makes it read on: memory stays bounded by the window.
    expect(mqttStats.peakHeldAcks).toBeLessThanOrEqual(LIMIT);
    expect(mqttStats.overWindow).toBe(0);
    expect(mqttStats.pauses).toBeGreaterThan(0);
    expect(warnings).toEqual([]);
    console.log(`MQTT ${protocolVersion}: backlog ${10 * LIMIT}, window ${LIMIT}: peak held ${mqttStats.peakHeldAcks}, beyond the window ${mqttStats.overWindow}, pauses ${mqttStats.pauses}`);
  });

  it(`dead-letters a burst of ${3 * LIMIT} refused messages and processes every good scan behind it`, async () => {
    const clientId = `test-burst-v${protocolVersion}`;
    const live = await start(clientId);
    const watcher = await mqtt.connectAsync(broker.url, { clientId: `test-dl-watch-v${protocolVersion}`, reconnectPeriod: 0 });
    let copies = 0;
    watcher.on('message', () => { copies++; });
    await watcher.subscribeAsync('strainward/brannock-mere/deadletter', { qos: 1 });

    const good = 2 * LIMIT;
    await publishAll(broker.url, [thermal(), ...Array.from({ length: 3 * LIMIT }, (_, k) => refused(k)), ...Array.from({ length: good }, (_, seq) => scan(seq))]);
    const lpDir = join(dir, clientId, 'lp');
    await until(async () => (await written(lpDir)).rawSeqs.size >= good && copies >= 3 * LIMIT, 30_000);
    const status = live.status() as { deadLetters: { messages: number }; mqtt: { connects: number; peakHeldAcks: number } };
    await live.stop();
    await watcher.endAsync();

    const w = await written(lpDir);
    expect(w.rawSeqs.size).toBe(good);
    expect(status.deadLetters.messages).toBe(3 * LIMIT);
    expect(copies).toBe(3 * LIMIT); // every MQTT copy acknowledged by the broker and delivered
    const file = (await readFile(join(dir, clientId, 'dl.ndjson'), 'utf8')).trim().split('\n');
    expect(file).toHaveLength(3 * LIMIT);
    expect(status.mqtt.connects).toBe(1);
    expect(status.mqtt.peakHeldAcks).toBeLessThanOrEqual(LIMIT);
  });
});
