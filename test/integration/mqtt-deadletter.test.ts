/**
 * Starts a real Mosquitto (test/support/servers.ts). Dead-letter record: the MQTT publisher and the
 * NDJSON file writer behind one fan-out, fed by the decoder with real refused payloads.
 * (Lives here because the dead-letter sinks have no test folder of their own.)
 */
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { connectMqtt, type MqttConnection } from '../../src/adapters/mqtt/connection.js';
import { DeadLetterFanOut } from '../../src/adapters/deadletter/fan-out.js';
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
    expect((await published).map((m) => JSON.parse(text(m)))).toEqual(letters);
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
