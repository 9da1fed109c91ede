/**
 * Intake back-pressure against a real Mosquitto (started here on a free loopback port): with
 * maxHeldAcks messages unacknowledged the connection stops reading, and the rest wait at the broker;
 * but an answer the client awaits (PUBACK of its own publish) is always read, and a keep-alive
 * ping outstanding neither makes it read on nor gets the connection given up; and a backlog read
 * in one burst lets the event loop turn between slices of it.
 */
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AckTicket } from '../../src/adapters/mqtt/ack-queue.js';
import { connectMqtt, type InboundMessage } from '../../src/adapters/mqtt/connection.js';
import { holdPubacks } from '../../src/adapters/mqtt/intake-window.js';
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

  it('paused at maxHeldAcks, stays paused through keep-alive pings, reads on to the PUBACK of its own publish, and counts what came beyond the window', async () => {
    // MQTT 3.1.1 to a broker allowing 2000 in flight: it sends far more than the window of 50.
    const warnings: string[] = [];
    const conn = await connectMqtt(
      { url: broker.url, clientId: 'test-bp-answers', protocolVersion: 4, maxHeldAcks: 50, keepalive_s: 2, subscriptions: ['bpa/#'] },
      { now: Date.now, warn: (event) => warnings.push(event) },
    );
    const received: InboundMessage[] = [];
    conn.messages$.subscribe((m) => received.push(m));
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-bpa-pub' });
    await Promise.all(Array.from({ length: 500 }, (_, i) => pub.publishAsync(`bpa/${i}`, 'x', { qos: 1 })));
    await new Promise((r) => setTimeout(r, 300));
    expect(received.length).toBeLessThanOrEqual(51); // paused, nothing awaited
    expect(warnings).toEqual([]);
    // Held for 4 s, twice the keep-alive: PINGREQs go out, but the client stays paused (their
    // PINGRESPs lie behind the 450 messages) and the connection is not given up.
    await new Promise((r) => setTimeout(r, 4000));
    expect(received.length).toBeLessThanOrEqual(51);
    expect(conn.stats().reconnectAttempts).toBe(0);
    // Our own publish: its PUBACK lies behind the messages on the wire, so the client reads on to it.
    await conn.publish('bpa-out/copy', 'copy', { qos: 1 });
    expect(received.length).toBe(500);
    expect(conn.stats().overWindow).toBe(500 - 50);
    expect(conn.stats().peakHeldAcks).toBe(500);
    expect(warnings).toEqual(['mqtt_window_exceeded']); // once per connection
    expect(conn.stats().connects).toBe(1);
    for (const m of received) m.ack();
    expect(conn.stats().heldAcks).toBe(0);
    await pub.endAsync();
    await conn.close();
  });

  it('stops at maxHeldAcks with a PINGRESP due (behind the messages on the wire) and is not given up for it', async () => {
    // mqtt.js's keep-alive runs on this timer (its `timerVariant` option): each tick is half a
    // keep-alive period; the second since the last restart sends a PINGREQ, the third gives up.
    let keepaliveStep: (() => void) | null = null;
    const tick = () => keepaliveStep?.();
    const timerVariant = {
      set: (step: () => void) => { keepaliveStep = step; return 1; },
      clear: () => { keepaliveStep = null; },
    } as unknown as mqtt.IClientOptions['timerVariant'];
    const client = await mqtt.connectAsync(broker.url, { clientId: 'test-bp-ping', protocolVersion: 4, keepalive: 10, reconnectPeriod: 0, timerVariant });
    const errors: string[] = [];
    client.on('error', (e) => errors.push(e.message));
    const intake = holdPubacks(client, 50, 4, () => {});
    const tickets: AckTicket[] = [];
    client.on('message', (_topic, _payload, packet) => { tickets.push(intake.take(packet.messageId!)); });
    await client.subscribeAsync('bpp/#', { qos: 1 });
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-bpp-pub' });
    await Promise.all(Array.from({ length: 500 }, (_, i) => pub.publishAsync(`bpp/${i}`, 'x', { qos: 1 })));
    await new Promise((r) => setTimeout(r, 300));
    expect(tickets.length).toBe(50); // stopped at the window, 450 on the wire (2000 allowed in flight)

    // Acknowledge the 50: reading goes on. Before it does, the keep-alive sends its PINGREQ: the
    // PINGRESP comes behind the 450 messages.
    for (const t of tickets) t.ack();
    tick();
    tick();
    await new Promise((r) => setTimeout(r, 300));
    expect(tickets.length).toBe(100); // stopped at the window again, the PINGRESP unread
    expect(intake.stats.overWindow).toBe(0);
    // Stopped for five more half-periods: the stop restarted the keep-alive, the PINGREQs sent
    // meanwhile restart it again; it never reaches the third tick that gives up.
    for (let k = 0; k < 5; k++) tick();
    expect(errors).toEqual([]);
    expect(client.connected).toBe(true);

    const deadline = Date.now() + 15_000;
    let acked = 0;
    while (tickets.length < 500 && Date.now() < deadline) {
      while (acked < tickets.length) tickets[acked++].ack();
      await new Promise((r) => setTimeout(r, 20));
    }
    while (acked < tickets.length) tickets[acked++].ack();
    expect(tickets.length).toBe(500);
    expect(intake.stats.peakHeldAcks).toBe(50);
    expect(intake.stats.overWindow).toBe(0);
    expect(errors).toEqual([]);
    expect(client.connected).toBe(true);
    await pub.endAsync();
    await client.endAsync();
  });

  it('lets the event loop turn while it reads a backlog (every message, with a slice of 0 ms)', async () => {
    // A persistent session collects 300 scans while the client is away; on its return the broker
    // sends them in one burst, which mqtt.js handles through process.nextTick (before any I/O).
    const opts = { clientId: 'test-bp-slice', protocolVersion: 4 as const, clean: false, reconnectPeriod: 0 };
    const first = await mqtt.connectAsync(broker.url, opts);
    await first.subscribeAsync('bps/#', { qos: 1 });
    await first.endAsync();
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-bps-pub' });
    await Promise.all(Array.from({ length: 300 }, (_, i) => pub.publishAsync(`bps/${i}`, 'x', { qos: 1 })));
    await pub.endAsync();

    let turns = 0;
    let counting = true;
    const turn = () => { turns++; if (counting) setImmediate(turn); };
    setImmediate(turn);
    const turnsSeen: number[] = [];
    const client = mqtt.connect(broker.url, opts);
    const intake = holdPubacks(client, 1000, 4, () => {}, 0);
    client.on('message', (_topic, _payload, packet) => {
      turnsSeen.push(turns);
      intake.take(packet.messageId!).ack();
    });
    const deadline = Date.now() + 10_000;
    while (turnsSeen.length < 300 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
    counting = false;
    expect(turnsSeen.length).toBe(300);
    // Each message after the first was read after a turn of the loop: 300 different counts.
    expect(new Set(turnsSeen).size).toBe(300);
    await client.endAsync();
  });
});
