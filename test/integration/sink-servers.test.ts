/**
 * Starts: Mosquitto (anonymous, then with a password file) and VictoriaMetrics, on loopback.
 * Checks the real-server test support, and pins the series naming the database sink relies on.
 */
import { execFileSync } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { describe, expect, it } from 'vitest';
import { startMosquitto, startVictoriaMetrics } from '../support/servers.js';

async function roundTrip(url: string, opts: mqtt.IClientOptions): Promise<string> {
  const client = await mqtt.connectAsync(url, { ...opts, reconnectPeriod: 0 });
  try {
    const received = new Promise<string>((resolve) => client.on('message', (_t, payload) => resolve(payload.toString())));
    await client.subscribeAsync('brannock-mere/test', { qos: 1 });
    await client.publishAsync('brannock-mere/test', 'hello', { qos: 1 });
    return await received;
  } finally {
    await client.endAsync();
  }
}

describe('startMosquitto', () => {
  it('serves anonymous clients on a loopback port and stops', async () => {
    const broker = await startMosquitto();
    try {
      expect(broker.url).toBe(`mqtt://127.0.0.1:${broker.port}`);
      expect(await roundTrip(broker.url, {})).toBe('hello');
    } finally {
      await broker.stop();
    }
    await expect(mqtt.connectAsync(broker.url, { reconnectPeriod: 0, connectTimeout: 1_000 })).rejects.toThrow();
  });

  it('with a password file: refuses anonymous clients, accepts the user', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-mosq-pw-'));
    const passwordFile = join(dir, 'passwords');
    execFileSync('mosquitto_passwd', ['-b', '-c', passwordFile, 'gauge-reader', 'pw-1234']);
    const broker = await startMosquitto({ passwordFile });
    try {
      await expect(mqtt.connectAsync(broker.url, { reconnectPeriod: 0 })).rejects.toThrow(/Not authorized|Bad username/i);
      expect(await roundTrip(broker.url, { username: 'gauge-reader', password: 'pw-1234' })).toBe('hello');
    } finally {
      await broker.stop();
      await rm(dir, { recursive: true, force: true });
    }
  });
});

describe('startVictoriaMetrics: series naming of the InfluxDB v2 write API', () => {
  // Source: observed behaviour of victoria-metrics 1.79.5 (Debian), documented in test/support/servers.ts.
  it('names series <measurement>_<field>, turns tags into labels and ignores org and bucket', async () => {
    const vm = await startVictoriaMetrics();
    try {
      const t = Date.now() - 60_000;
      const body = `sw_probe,structure=brannock-mere,group=g\\ 1 von_mises_MPa=12.5,stress_xx_MPa=-3.25 ${t}`;
      const res = await fetch(`${vm.url}/api/v2/write?org=acme&bucket=strain&precision=ms`, { method: 'POST', body });
      expect(res.status).toBe(204);
      await vm.forceFlush();
      const series = (await vm.exportSeries('{__name__=~"sw_probe_.+"}')).sort((a, b) => a.metric.__name__.localeCompare(b.metric.__name__));
      expect(series).toEqual([
        { metric: { __name__: 'sw_probe_stress_xx_MPa', structure: 'brannock-mere', group: 'g 1' }, values: [-3.25], timestamps: [t] },
        { metric: { __name__: 'sw_probe_von_mises_MPa', structure: 'brannock-mere', group: 'g 1' }, values: [12.5], timestamps: [t] },
      ]);
    } finally {
      await vm.stop();
    }
  });
});
