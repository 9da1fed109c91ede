/**
 * Input-side figures: decode rate (pure), capture write/read rate and compression, and the MQTT
 * round trip through a real Mosquitto (test/support/servers.ts) with PUBACKs held until ack().
 * Last printed line: one JSON object.
 */
import { mkdtemp, readdir, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { firstValueFrom, take, toArray } from 'rxjs';
import { CaptureWriter } from '../src/adapters/capture/capture-writer.js';
import { readCapture } from '../src/adapters/capture/capture-reader.js';
import { connectMqtt } from '../src/adapters/mqtt/connection.js';
import { decodeMessage } from '../src/ingest/decode.js';
import { compileTopicPattern } from '../src/ingest/topic.js';
import type { ChannelDirectory } from '../src/model/channel-directory.js';
import type { RawMessage } from '../src/model/raw-message.js';
import { startMosquitto } from '../test/support/servers.js';

const CHANNELS = 16;
const N = 50_000;
const T0 = Date.UTC(2025, 2, 14);
const TOPIC = 'strainward/brannock-mere/span1-north/scan';
const directory: ChannelDirectory = { structureId: 'brannock-mere', hasLogger: () => true, hasChannel: () => true };
const pattern = compileTopicPattern();
const encoder = new TextEncoder();
function scan(i: number): RawMessage {
  const values: Record<string, number> = {};
  for (let c = 0; c < CHANNELS; c++) values[`ch${String(c + 1).padStart(2, '0')}`] = Math.round((Math.sin(i / 50 + c) * 400 + c) * 100) / 100;
  return { topic: TOPIC, arrivalMs: T0 + i * 10, payload: encoder.encode(JSON.stringify({ ts: T0 + i * 10, seq: i, values })) };
}
const messages = Array.from({ length: N }, (_, i) => scan(i));
const rawBytes = messages.reduce((s, m) => s + m.payload.byteLength, 0);

let t = performance.now();
let ok = 0;
for (const m of messages) if (decodeMessage(m, directory, pattern).ok) ok++;
const decodePerS = N / ((performance.now() - t) / 1000);
if (ok !== N) throw new Error('decode failed');

const dir = await mkdtemp(join(tmpdir(), 'sw-bench-capture-'));
const writer = await CaptureWriter.open({ dir, rotateBytes: 64 * 1024 * 1024, rotateEvery_ms: 3_600_000, now: () => T0 });
t = performance.now();
for (let i = 0; i < N; i++) {
  writer.append(messages[i]);
  if (i % 100 === 99) await writer.flush(); // one batch per second at 100 scans/s
}
await writer.close();
const captureWritePerS = N / ((performance.now() - t) / 1000);
let diskBytes = 0;
for (const f of await readdir(dir)) if (f.endsWith('.gz')) diskBytes += (await stat(join(dir, f))).size;
t = performance.now();
let read = 0;
for await (const _ of readCapture(dir)) read++;
const captureReadPerS = read / ((performance.now() - t) / 1000);
await rm(dir, { recursive: true, force: true });

const broker = await startMosquitto();
const M = 5_000;
const conn = await connectMqtt({ url: broker.url, clientId: 'sw-bench', subscriptions: ['strainward/brannock-mere/+/scan'] }, { now: Date.now });
const publisher = await mqtt.connectAsync(broker.url, { clientId: 'sw-bench-pub' });
const received = firstValueFrom(conn.messages$.pipe(take(M), toArray()));
let acked = 0;
let seen = 0;
const sub = conn.messages$.subscribe((m) => {
  seen++;
  // ack every message after a 5 ms delay, out of order in pairs: exercises the ordered queue
  setTimeout(() => { m.ack(); acked++; }, acked % 2 === 0 ? 5 : 1);
});
t = performance.now();
// Publish in windows of 200: Mosquitto's default max_queued_messages (1000) drops QoS 1
// messages queued beyond it for a subscriber whose inflight window (20) is full.
for (let i = 0; i < M; i += 200) {
  await Promise.all(messages.slice(i, i + 200).map((m) => publisher.publishAsync(TOPIC, Buffer.from(m.payload), { qos: 1 })));
  while (seen < i - 400) await new Promise((r) => setTimeout(r, 1));
}
await received;
while (conn.stats().heldAcks > 0) await new Promise((r) => setTimeout(r, 5));
const mqttPerS = M / ((performance.now() - t) / 1000);
sub.unsubscribe();
await publisher.endAsync();
await conn.close();
await broker.stop();

console.log(JSON.stringify({
  channelsPerScan: CHANNELS,
  scans: N,
  decodeScansPerS: Math.round(decodePerS),
  captureWriteScansPerS: Math.round(captureWritePerS),
  captureReadScansPerS: Math.round(captureReadPerS),
  captureBytesPerScanOnDisk: Math.round((diskBytes / N) * 10) / 10,
  captureCompressionRatio: Math.round((rawBytes / diskBytes) * 100) / 100,
  mqttQos1HeldAckRoundTripScansPerS: Math.round(mqttPerS),
}));
