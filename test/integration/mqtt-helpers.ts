import { createServer, type Server } from 'node:net';
import { Aedes } from 'aedes';
import mqtt from 'mqtt';
import { firstValueFrom, take, toArray, timeout, type Observable } from 'rxjs';
import type { InboundMessage } from '../../src/adapters/mqtt/connection.js';

/** An embedded aedes broker (MQTT 3.1.1 only) on a loopback port; can be restarted on the same port. */
export async function startAedes(port = 0): Promise<{ url: string; port: number; stop(): Promise<void> }> {
  const broker = await Aedes.createBroker();
  const server: Server = createServer(broker.handle);
  await new Promise<void>((resolve) => server.listen(port, '127.0.0.1', resolve));
  const bound = (server.address() as { port: number }).port;
  return {
    url: `mqtt://127.0.0.1:${bound}`,
    port: bound,
    stop: async () => {
      await new Promise<void>((resolve) => broker.close(() => resolve()));
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}

/** Publish payloads at QoS 1 from a separate client; resolves once the broker has PUBACKed all. */
export async function publishAll(url: string, topic: string, payloads: (string | Uint8Array)[], protocolVersion: 4 | 5 = 5): Promise<void> {
  const client = await mqtt.connectAsync(url, { clientId: `sw-test-publisher-${Math.random().toString(16).slice(2)}`, protocolVersion, reconnectPeriod: 0 });
  for (const p of payloads) await client.publishAsync(topic, typeof p === 'string' ? p : Buffer.from(p), { qos: 1 });
  await client.endAsync();
}

/** The next `n` messages, failing after `ms` instead of hanging the suite. */
export function nextMessages(messages$: Observable<InboundMessage>, n: number, ms = 10_000): Promise<InboundMessage[]> {
  return firstValueFrom(messages$.pipe(take(n), toArray(), timeout(ms)));
}

export const text = (m: InboundMessage) => new TextDecoder().decode(m.raw.payload);
