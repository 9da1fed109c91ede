/**
 * Nothing silently lost: the live job against a real Mosquitto and a real VictoriaMetrics (both on
 * free loopback ports) that is stopped in the middle of the run and restarted on the same port and
 * data directory. Results made during the outage go to the spool and arrive once it is back.
 */
import { mkdtemp } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, describe, expect, it } from 'vitest';
import { startLive } from '../../src/app/live.js';
import { loadStructureFile } from '../../src/config/load.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { startMosquitto, startVictoriaMetrics, type VictoriaMetricsServer } from '../support/servers.js';

const servers: Array<{ stop(): Promise<void> }> = [];
afterAll(async () => { for (const s of servers.reverse()) await s.stop(); });

async function until(what: string, cond: () => boolean, ms = 20_000): Promise<void> {
  const deadline = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

describe('live job through a database outage', () => {
  it('spools while the database is down and writes every result once when it is back', async () => {
    const broker = await startMosquitto();
    servers.push(broker);
    const dir = await mkdtemp(join(tmpdir(), 'sw-outage-'));
    const dataDir = join(dir, 'vm-data'); // ours, so it outlives the first server process
    let vm: VictoriaMetricsServer = await startVictoriaMetrics({ dataDir });
    const { port } = vm;
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      mqtt: { url: broker.url, client_id: 'strainward-test-outage' },
      database: { url: vm.url, org: 'o', bucket: 'b', spool: { dir: join(dir, 'spool') }, flush_interval_ms: 20, max_retries: 1, min_retry_delay_ms: 20, max_retry_delay_ms: 200, timeout_ms: 1000 },
      dead_letters: { file: join(dir, 'dl.ndjson') },
      alarms: { state_file: join(dir, 'alarm-state.json'), log_file: join(dir, 'alarms.ndjson') },
      tick_ms: 200,
    }, 'test');
    const live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: () => {} });
    const db = () => live.status().database as { spooledPoints: number; spoolBytes: number; writtenPoints: number };
    const results = () => (live.status().frames as { results: number }).results;
    const g = structure.groupsById.get('flange-south-mid1')!;
    const t0 = Date.UTC(2026, 10, 1, 3, 0, 0);
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-outage-loggers' });
    const publish = async (k: number) => {
      // lg-span1 carries flange-north-mid1 (3 channels) and flange-south-mid1 (ch04); 14 degC everywhere.
      const raw = readingsFromStress(g.model, [40 + k], 14, Number.NaN, new Float64Array(1));
      await pub.publishAsync('strainward/brannock-mere/lg-span1/scan', JSON.stringify({ ts: t0 + 100 * k, values: { ch01: 0, ch02: 0, ch03: 0, ch04: raw[0] } }), { qos: 1 });
    };
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    for (let k = 0; k < 50; k++) await publish(k);
    await until('the first 50 frames', () => results() >= 100);
    await until('the first writes', () => db().writtenPoints > 0 && db().spoolBytes === 0);
    await vm.stop();
    for (let k = 50; k < 120; k++) await publish(k);
    await until('the outage frames', () => results() >= 240);
    await until('the spool to take them', () => db().spooledPoints > 0 && (live.status().mqtt as { heldAcks: number }).heldAcks === 0);
    const spooled = db().spooledPoints;
    vm = await startVictoriaMetrics({ port, dataDir });
    servers.push(vm);
    await until('the spool to drain', () => db().spoolBytes === 0, 30_000);
    await live.stop();
    await pub.endAsync();
    // The server makes freshly flushed data searchable within moments: read until it is all there.
    let s = { values: [] as number[], timestamps: [] as number[] };
    for (let i = 0; i < 50 && s.values.length < 120; i++) {
      await vm.forceFlush();
      s = (await vm.exportSeries('sw_result_stress_axial_MPa{group="flange-south-mid1"}'))[0] ?? s;
      if (s.values.length < 120) await new Promise((r) => setTimeout(r, 100));
    }
    expect(spooled).toBeGreaterThan(0);
    expect(s.values).toHaveLength(120);
    // Hooke's law through the core both ways: every value back within 1e-6 MPa, once each.
    s.values.forEach((v, k) => expect(Math.abs(v - (40 + k))).toBeLessThan(1e-6));
    expect(s.timestamps).toEqual(Array.from({ length: 120 }, (_, k) => t0 + 100 * k));
  }, 90_000);
});
