import { describe, expect, it } from 'vitest';
import { mqttConnectionOptionsSchema, nextReconnectDelay_ms } from '../../../src/adapters/mqtt/options.js';

describe('MQTT connection options', () => {
  it('fills defaults: MQTT 5 preferred, fallback on, persistent session of one day', () => {
    const o = mqttConnectionOptionsSchema.parse({ url: 'mqtt://127.0.0.1:1883', clientId: 'sw-brannock-mere' });
    expect(o).toMatchObject({ protocolVersion: 5, fallbackToV311: true, sessionExpiry_s: 86_400, reconnectInitial_ms: 500, reconnectMax_ms: 30_000 });
  });

  it('names every bad field at once', () => {
    const r = mqttConnectionOptionsSchema.safeParse({ url: 'http://x', clientId: '', protocolVersion: 3, tls: { certFile: 'c.pem' } });
    expect(r.success).toBe(false);
    expect(r.error!.issues.map((i) => `${i.path.join('.')}: ${i.message}`)).toEqual([
      'url: expected mqtt://host:port or mqtts://host:port',
      'clientId: a fixed client id is required for a persistent session',
      'protocolVersion: expected 5 (MQTT 5) or 4 (MQTT 3.1.1)',
      'tls: certFile and keyFile go together',
    ]);
  });

  it('backoff doubles up to the cap', () => {
    const o = { reconnectFactor: 2, reconnectMax_ms: 3000 };
    const delays = [500];
    for (let i = 0; i < 4; i++) delays.push(nextReconnectDelay_ms(delays.at(-1)!, o));
    expect(delays).toEqual([500, 1000, 2000, 3000, 3000]);
  });
});
