/**
 * Starts a real Mosquitto (test/support/servers.ts). Dead-letter record: the MQTT publisher and the
 * NDJSON file writer behind one fan-out, fed by the decoder with real refused payloads; and a
 * second Mosquitto started with `max_packet_size`, which the capped MQTT copy must fit under.
 * (Lives here because the dead-letter sinks have no test folder of their own.)
 */
import { createHash } from 'node:crypto';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { connectMqtt, type MqttConnection } from '../../src/adapters/mqtt/connection.js';
import { DeadLetterFanOut } from '../../src/adapters/deadletter/fan-out.js';
import type { DeadLetterCopy } from '../../src/adapters/deadletter/mqtt-copy.js';
import { MqttDeadLetterSink } from '../../src/adapters/deadletter/mqtt-sink.js';
import { NdjsonFileDeadLetterSink } from '../../src/adapters/deadletter/ndjson-file-sink.js';
import type { DeadLetterSink } from '../../src/adapters/deadletter/sink.js';
import { decodeMessage } from '../../src/ingest/decode.js';
import { compileTopicPattern } from '../../src/ingest/topic.js';
import type { DeadLetter } from '../../src/model/rejection.js';
import { directory, raw } from '../ingest/fixtures.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { nextMessages, text } from './mqtt-helpers.js';

const pattern = compileTopicPattern();
function deadLetterOf(payload: string | Uint8Array): DeadLetter {
  const r = decodeMessage(raw(payload), directory, pattern);
  if (r.ok) throw new Error('expected a refusal');
  return r.deadLetter;
}

describe('dead-letter sinks', () => {
  let broker: MosquittoServer;
  let dir: string;
  const open: MqttConnection[] = [];
  beforeEach(async () => {
    broker = await startMosquitto();
    dir = await mkdtemp(join(tmpdir(), 'sw-deadletter-'));
  });
  afterEach(async () => {
    for (const c of open.splice(0)) c.abandon();
    await broker.stop();
    await rm(dir, { recursive: true, force: true });
  });

  it('records every refused message in the file and on the broker, counted per code', async () => {
    const conn = await connectMqtt(
      { url: broker.url, clientId: 'sw-proc-dl', subscriptions: ['strainward/brannock-mere/deadletter'] },
      { now: () => 0 },
    );
    open.push(conn);
    const file = new NdjsonFileDeadLetterSink(join(dir, 'nested', 'deadletter.ndjson'));
    const mqttSink = new MqttDeadLetterSink(conn.publish, 'brannock-mere');
    expect(mqttSink.topic).toBe('strainward/brannock-mere/deadletter');
    const fanOut = new DeadLetterFanOut([file, mqttSink]);

    const letters = [
      deadLetterOf('{"ts":1741944413589,"values":{"ch01":"x","ch99":1}}'),
      deadLetterOf(new Uint8Array([0xc3, 0x28])), // invalid UTF-8
    ];
    const published = nextMessages(conn.messages$, 2);
    for (const d of letters) await fanOut.write(d);
    await file.close();

    const lines = (await readFile(file.path, 'utf8')).split('\n');
    expect(lines.at(-1)).toBe('');
    expect(lines.slice(0, -1).map((l) => JSON.parse(l))).toEqual(letters);
    // On the topic, a notice (reasons, size, SHA-256 by node:crypto, excerpt); the file has the whole record.
    expect((await published).map((m) => JSON.parse(text(m)))).toEqual(letters.map((d) => {
      const bytes = Buffer.from(d.payloadBase64, 'base64');
      return {
        topic: d.topic, topicTruncated: false, arrivalMs: d.arrivalMs, arrivalIso: d.arrivalIso,
        payloadBytes: bytes.length, payloadSha256: createHash('sha256').update(bytes).digest('hex'),
        rejections: d.rejections, rejectionCount: d.rejections.length,
        excerptText: d.payloadText, excerptBase64: d.payloadText === null ? d.payloadBase64 : null, excerptBytes: bytes.length,
      };
    }));
    expect(Buffer.from(letters[1].payloadBase64, 'base64')).toEqual(Buffer.from([0xc3, 0x28]));
    expect(fanOut.counts).toEqual({
      messages: 2,
      byCode: { invalid_payload: 1, unknown_channel: 1, not_json: 1 },
      failuresBySink: [0, 0],
    });
  });

  it('a failing sink makes the write reject (so the message is not acked) but the others still get it', async () => {
    const kept: DeadLetter[] = [];
    const good: DeadLetterSink = { write: async (d) => void kept.push(d) };
    const broken: DeadLetterSink = { write: async () => Promise.reject(new Error('disk full')) };
    const fanOut = new DeadLetterFanOut([good, broken]);
    const d = deadLetterOf('');
    await expect(fanOut.write(d)).rejects.toThrow('dead letter not recorded by 1 of 2 sinks');
    expect(kept).toEqual([d]);
    expect(fanOut.counts.failuresBySink).toEqual([0, 1]);
  });
});

describe('dead-letter copy under a broker max_packet_size', () => {
  const LIMIT = 8192;
  let broker: MosquittoServer;
  let dir: string;
  beforeEach(async () => {
    broker = await startMosquitto({ maxPacketSize: LIMIT });
    dir = await mkdtemp(join(tmpdir(), 'sw-deadletter-limit-'));
  });
  afterEach(async () => {
    await broker.stop();
    await rm(dir, { recursive: true, force: true });
  });

  it('publishes a capped copy of a refused message of 6 kB and keeps the whole original in the file', async () => {
    // 6 kB of channels the logger does not have: the broker takes it, but its full record (base64 +
    // text + 450 reasons) would be about 50 kB.
    const values = Object.fromEntries(Array.from({ length: 450 }, (_, i) => [`x${String(i).padStart(3, "0")}`, 1.25]));
    const payload = JSON.stringify({ ts: 1741944413589, values });
    expect(payload.length).toBeGreaterThan(5000);
    const letter = deadLetterOf(payload);
    expect(Buffer.byteLength(JSON.stringify(letter))).toBeGreaterThan(LIMIT);

    const conn = await connectMqtt({ url: broker.url, clientId: 'sw-proc-dl-limit', subscriptions: ['strainward/brannock-mere/deadletter'] }, { now: () => 0 });
    const file = new NdjsonFileDeadLetterSink(join(dir, 'deadletter.ndjson'));
    const fanOut = new DeadLetterFanOut([file, new MqttDeadLetterSink(conn.publish, 'brannock-mere', undefined, LIMIT)]);
    const published = nextMessages(conn.messages$, 1);
    await fanOut.write(letter);
    await file.close();
    const [m] = await published;
    const copy = JSON.parse(text(m)) as DeadLetterCopy;
    expect(m.raw.payload.length).toBeLessThanOrEqual(LIMIT - 10 - m.raw.topic.length);
    expect(copy.payloadBytes).toBe(payload.length);
    expect(copy.payloadSha256).toBe(createHash('sha256').update(payload).digest('hex'));
    expect(copy.rejectionCount).toBe(letter.rejections.length);
    expect(payload.startsWith(copy.excerptText!)).toBe(true);
    expect(conn.stats().connects).toBe(1);
    const [line] = (await readFile(file.path, 'utf8')).trim().split('\n');
    expect(Buffer.from((JSON.parse(line) as DeadLetter).payloadBase64, 'base64').toString('utf8')).toBe(payload);
    conn.abandon();

    // What the cap prevents: the whole record published on that broker, and the broker drops the connection.
    const plain = await mqtt.connectAsync(broker.url, { clientId: 'sw-proc-dl-uncapped', reconnectPeriod: 0 });
    const closed = new Promise<void>((resolve) => plain.once('close', () => resolve()));
    plain.publishAsync('strainward/brannock-mere/deadletter', JSON.stringify(letter), { qos: 1 }).catch(() => {});
    await closed;
    plain.end(true);
  });
});
