/**
 * Starts the embedded aedes broker (MQTT 3.1.1 only, in this process). Checks the fallback from
 * MQTT 5 to 3.1.1, held PUBACKs on 3.1.1, and reconnect with backoff and resubscription after the
 * broker comes back on the same port with no memory of the session.
 */
import { afterEach, describe, expect, it } from 'vitest';
import { connectMqtt, type MqttConnection } from '../../src/adapters/mqtt/connection.js';
import { nextMessages, publishAll, startAedes, text } from './mqtt-helpers.js';

const TOPIC = 'strainward/brannock-mere/span1-north/scan';
const FILTER = 'strainward/brannock-mere/+/scan';

async function until(check: () => boolean, what: string, ms = 10_000): Promise<void> {
  const deadline = Date.now() + ms;
  while (!check()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('MQTT adapter against aedes (3.1.1)', () => {
  const cleanups: (() => Promise<void> | void)[] = [];
  afterEach(async () => {
    for (const c of cleanups.splice(0).reverse()) await c();
  });

  it('falls back to 3.1.1 when the broker refuses MQTT 5, and still holds PUBACKs until ack()', async () => {
    const broker = await startAedes();
    cleanups.push(() => broker.stop());
    const events: string[] = [];
    const conn = await connectMqtt(
      { url: broker.url, clientId: 'sw-proc-aedes', subscriptions: [FILTER] },
      { now: () => 0, log: (e) => events.push(e) },
    );
    cleanups.push(() => conn.abandon());
    expect(conn.protocolVersion).toBe(4);
    expect(events).toContain('mqtt_fallback_v311');

    await publishAll(broker.url, TOPIC, ['a'], 4);
    const [m] = await nextMessages(conn.messages$, 1);
    expect(text(m)).toBe('a');
    expect(conn.stats().heldAcks).toBe(1);
    m.ack();
    expect(conn.stats().heldAcks).toBe(0);
  });

  it('refuses to fall back when told not to', async () => {
    const broker = await startAedes();
    cleanups.push(() => broker.stop());
    await expect(
      connectMqtt({ url: broker.url, clientId: 'sw-proc-aedes', fallbackToV311: false }, { now: () => 0 }),
    ).rejects.toMatchObject({ code: 1 });
  });

  it('reconnects with a growing, capped delay and resubscribes when the session is gone', async () => {
    let broker = await startAedes();
    const port = broker.port;
    const conn = await connectMqtt(
      { url: broker.url, clientId: 'sw-proc-aedes', subscriptions: [FILTER], reconnectInitial_ms: 50, reconnectMax_ms: 200 },
      { now: () => 0 },
    );
    cleanups.push(() => conn.abandon());
    await broker.stop();
    await until(() => conn.stats().reconnectAttempts >= 4, 'four reconnect attempts');
    expect(conn.stats().reconnectDelay_ms).toBe(200); // 50 -> 100 -> 200 -> capped at 200

    broker = await startAedes(port); // a new broker: no session, no subscriptions
    cleanups.push(() => broker.stop());
    await until(() => conn.stats().connects === 2, 'the second connection');
    expect(conn.stats().reconnectDelay_ms).toBe(50);
    // the resubscription is in flight right after CONNACK; publish until one arrives
    const arrived = nextMessages(conn.messages$, 1);
    let stop = false;
    const publishing = (async () => {
      for (let i = 0; i < 100 && !stop; i++) {
        await publishAll(broker.url, TOPIC, ['after-restart'], 4);
        await new Promise((r) => setTimeout(r, 50));
      }
    })();
    const [m] = await arrived;
    stop = true;
    await publishing;
    expect(text(m)).toBe('after-restart');
    m.ack();
  });
});
