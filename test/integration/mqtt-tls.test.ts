/**
 * The live job over TLS: a real Mosquitto with a TLS listener on a free loopback port (test-only
 * certificates in test/fixtures/tls), the runtime file naming the CA that verifies the broker.
 */
import { mkdtemp, readdir, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { startLive } from '../../src/app/live.js';
import { loadStructureFile } from '../../src/config/load.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { startMosquitto } from '../support/servers.js';

const TLS = resolve('test/fixtures/tls');

describe('MQTT over TLS', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  beforeAll(async () => {
    broker = await startMosquitto({ tls: { caFile: join(TLS, 'ca.pem'), certFile: join(TLS, 'server.pem'), keyFile: join(TLS, 'server.key') } });
  });
  afterAll(async () => { await broker?.stop(); });

  it('refuses a broker whose certificate the client cannot verify', async () => {
    expect(broker.url.startsWith('mqtts://')).toBe(true);
    await expect(mqtt.connectAsync(broker.url, { clientId: 'test-tls-unverified', reconnectPeriod: 0, connectTimeout: 5_000 }))
      .rejects.toThrow(/certificate/i);
  });

  it('processes scans received over TLS with the CA named in the runtime file', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'sw-tls-'));
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      mqtt: { url: broker.url, client_id: 'test-tls-live', tls: { ca_file: join(TLS, 'ca.pem') } },
      line_protocol: { dir: join(dir, 'lp') }, dead_letters: { file: join(dir, 'dl.ndjson') },
      alarms: { state_file: join(dir, 'state.json'), log_file: join(dir, 'alarms.ndjson') },
    }, 'test');
    const live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: () => {} });
    const g = structure.groupsById.get('flange-south-mid1')!;
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-tls-loggers', ca: await readFile(join(TLS, 'ca.pem')) });
    const t0 = Date.now();
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    for (let k = 0; k < 5; k++) {
      const raw = readingsFromStress(g.model, [40 + k], 14, Number.NaN, new Float64Array(1));
      await pub.publishAsync('strainward/brannock-mere/lg-span1/scan', JSON.stringify({ ts: t0 + 100 * k, values: { ch01: 0, ch02: 0, ch03: 0, ch04: raw[0] } }), { qos: 1 });
    }
    await pub.endAsync();
    const deadline = Date.now() + 20_000;
    while ((live.status().frames as { frames: number }).frames < 6 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    await live.stop();
    const files = (await readdir(join(dir, 'lp'))).filter((f) => f.endsWith('.lp'));
    const points = decodeLines((await Promise.all(files.map((f) => readFile(join(dir, 'lp', f), 'utf8')))).join(''));
    const axial = points.filter((p) => p.measurement === 'sw_result' && p.tags.group === 'flange-south-mid1').map((p) => p.fields.stress_axial_MPa);
    // Hooke's law through the core and back (common practice): each published stress within 1e-6 MPa.
    expect(axial).toHaveLength(5);
    axial.forEach((v, k) => expect(Math.abs(v - (40 + k))).toBeLessThan(1e-6));
  });
});
