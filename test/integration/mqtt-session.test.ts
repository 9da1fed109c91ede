/**
 * Starts a real Mosquitto (test/support/servers.ts) per test. Checks the persistent session and
 * the no-loss guarantee: a message not acked before a crash comes back on the next connection.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { connectMqtt, type MqttConnection } from '../../src/adapters/mqtt/connection.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { nextMessages, publishAll, text } from './mqtt-helpers.js';

const TOPIC = 'strainward/brannock-mere/span1-north/scan';
const FILTER = 'strainward/brannock-mere/+/scan';
const FIXED_NOW = 1_741_944_414_000;

describe('MQTT adapter against Mosquitto', () => {
  let broker: MosquittoServer;
  const open: MqttConnection[] = [];
  const connect = async (clientId = 'sw-proc-brannock-mere') => {
    const c = await connectMqtt({ url: broker.url, clientId, subscriptions: [FILTER], reconnectInitial_ms: 100 }, { now: () => FIXED_NOW });
    open.push(c);
    return c;
  };

  beforeEach(async () => {
    broker = await startMosquitto();
  });
  afterEach(async () => {
    for (const c of open.splice(0)) c.abandon();
    await broker.stop();
  });

  it('speaks MQTT 5 and delivers QoS 1 messages published while the processor was offline', async () => {
    const first = await connect();
    expect(first.protocolVersion).toBe(5);
    await first.close(); // graceful: the broker keeps the session (session expiry one day)

    const scans = [1, 2, 3].map((seq) => `{"ts":1741944413589,"seq":${seq},"values":{"ch01":${seq * 10}}}`);
    await publishAll(broker.url, TOPIC, scans);

    const second = await connect();
    const got = await nextMessages(second.messages$, 3);
    expect(got.map(text)).toEqual(scans);
    expect(got.map((m) => m.raw.topic)).toEqual([TOPIC, TOPIC, TOPIC]);
    expect(got.map((m) => m.raw.arrivalMs)).toEqual([FIXED_NOW, FIXED_NOW, FIXED_NOW]);
    for (const m of got) m.ack();
  });

  it('redelivers a message whose ack() was never called before the client died (no loss)', async () => {
    const first = await connect();
    await publishAll(broker.url, TOPIC, ['scan-1', 'scan-2', 'scan-3']);
    const got = await nextMessages(first.messages$, 3);
    // scan-2 and scan-3 are done, scan-1 is not: ordered PUBACKs hold all three back.
    got[1].ack();
    got[2].ack();
    expect(first.stats().heldAcks).toBe(3);
    first.abandon(); // no DISCONNECT, as a crash

    const second = await connect();
    const again = await nextMessages(second.messages$, 3);
    expect(again.map(text)).toEqual(['scan-1', 'scan-2', 'scan-3']);
    for (const m of again.reverse()) m.ack(); // acked out of order: released in order
    expect(second.stats().heldAcks).toBe(0);
    await second.close();

    // Everything was acked: the next session gets only what is published afterwards.
    const third = await connect();
    await publishAll(broker.url, TOPIC, ['marker']);
    const after = await nextMessages(third.messages$, 1);
    expect(after.map(text)).toEqual(['marker']);
  });

  it('keeps binary payloads byte for byte and publishes with retain for others', async () => {
    const conn = await connect();
    const bytes = new Uint8Array([0x00, 0xff, 0xfe, 0x80, 0x7b]);
    await conn.publish(TOPIC, bytes, { qos: 1, retain: false });
    const [m] = await nextMessages(conn.messages$, 1);
    expect([...m.raw.payload]).toEqual([...bytes]);
    m.ack();

    await conn.publish('strainward/brannock-mere/deadletter', 'kept', { qos: 1, retain: true });
    const late = await connectMqtt(
      { url: broker.url, clientId: 'sw-test-late', subscriptions: ['strainward/brannock-mere/deadletter'] },
      { now: () => FIXED_NOW },
    );
    open.push(late);
    const [retained] = await nextMessages(late.messages$, 1);
    expect(text(retained)).toBe('kept');
  });
});
