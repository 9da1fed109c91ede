/**
 * Intake back-pressure against a real Mosquitto (started here on a free loopback port): with
 * maxHeldAcks messages unacknowledged the connection stops reading, and the rest wait at the broker.
 */
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectMqtt, type InboundMessage } from '../../src/adapters/mqtt/connection.js';
import { startMosquitto } from '../support/servers.js';

describe('MQTT intake back-pressure', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => { broker = await startMosquitto(); });
  afterAll(async () => { await broker?.stop(); });

  it('stops taking messages at maxHeldAcks and takes the rest once acknowledgements flow', async () => {
    const conn = await connectMqtt({ url: broker.url, clientId: 'test-backpressure', maxHeldAcks: 50, subscriptions: ['bp/#'] }, { now: Date.now });
    const received: InboundMessage[] = [];
    conn.messages$.subscribe((m) => received.push(m));
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-bp-pub' });
    const body = 'x'.repeat(2000);
    await Promise.all(Array.from({ length: 1000 }, (_, i) => pub.publishAsync(`bp/${i}`, body, { qos: 1 })));
    await new Promise((r) => setTimeout(r, 500));
    const whilePaused = received.length;
    expect(conn.stats().pauses).toBeGreaterThanOrEqual(1);
    expect(whilePaused).toBeLessThanOrEqual(51); // mqtt.js reads one packet at a time: it stops right there
    expect(whilePaused).toBeGreaterThanOrEqual(50);
    const deadline = Date.now() + 15_000;
    let acked = 0;
    while (received.length < 1000 && Date.now() < deadline) {
      while (acked < received.length) received[acked++].ack();
      await new Promise((r) => setTimeout(r, 20));
    }
    while (acked < received.length) received[acked++].ack();
    expect(received.length).toBe(1000);
    expect(conn.stats().resumes).toBeGreaterThanOrEqual(1);
    await pub.endAsync();
    await conn.close();
  });
});
