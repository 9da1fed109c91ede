/**
 * The spool's disk fills while the database is down: the live job against a real Mosquitto and a
 * real VictoriaMetrics (both on free loopback ports; the database stopped, then restarted on its
 * data), the spool on a 256 KiB tmpfs mounted here (the tests run as root, as CI does). Under the
 * `block` policy nothing is lost; the crews hear of it as an instrument-health alarm.
 */
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startLive } from '../../src/app/live.js';
import { loadStructureFile } from '../../src/config/load.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { startMosquitto, startVictoriaMetrics, type VictoriaMetricsServer } from '../support/servers.js';
import { mountTmpfs, type Tmpfs } from '../support/tmpfs.js';

const servers: Array<{ stop(): Promise<void> }> = [];
let disk: Tmpfs;
let mountPoint: string;
beforeAll(async () => {
  disk = await mountTmpfs('sw-spool-disk-', '256k');
  mountPoint = disk.path;
});
afterAll(async () => {
  for (const s of servers.reverse()) await s.stop();
  await disk.remove();
});

async function until(what: string, cond: () => boolean | Promise<boolean>, ms = 30_000): Promise<void> {
  const deadline = Date.now() + ms;
  while (!(await cond())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

interface LogLine { type: string; message?: { rule: string; transition: string; subject: Record<string, string>; action: string } }

describe('live job with the spool disk full', () => {
  it('raises component_fault for the spool, logs write failures summarised, loses nothing, clears once the disk has room', async () => {
    const broker = await startMosquitto();
    servers.push(broker);
    const dir = await mkdtemp(join(tmpdir(), 'sw-spool-disk-run-'));
    const dataDir = join(dir, 'vm-data');
    let vm: VictoriaMetricsServer = await startVictoriaMetrics({ dataDir });
    const { port, url } = vm;
    await vm.stop(); // the database is down from the start
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      mqtt: { url: broker.url, client_id: 'strainward-test-spool-disk' },
      // The spool's own limit (1 GiB by default) is far above what its disk holds.
      database: { url, org: 'o', bucket: 'b', spool: { dir: join(mountPoint, 'spool') }, flush_interval_ms: 20, max_retries: 1, min_retry_delay_ms: 20, max_retry_delay_ms: 200, timeout_ms: 1000 },
      dead_letters: { file: join(dir, 'dl.ndjson') },
      alarms: { state_file: join(dir, 'alarm-state.json'), log_file: join(dir, 'alarms.ndjson') },
      tick_ms: 200,
    }, 'test');
    const logged: Array<{ event: string; detail?: Record<string, unknown> }> = [];
    const live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: (event, detail) => logged.push({ event, detail }) });
    const db = () => live.status().database as { spoolWriteFailure: string | null; spoolDiskFreeBytes: number; spoolFillRatio: number; spoolLimitBytes: number };
    const alarmLog = async (): Promise<LogLine[]> => (await readFile(join(dir, 'alarms.ndjson'), 'utf8')).split('\n').filter(Boolean).map((l) => JSON.parse(l) as LogLine);
    const spoolAlarms = async () => (await alarmLog()).filter((l) => l.type === 'transition' && l.message?.rule === 'component_fault');

    const g = structure.groupsById.get('flange-south-mid1')!;
    const t0 = Date.UTC(2026, 10, 1, 3, 0, 0);
    const scans = 1500;
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-spool-disk-loggers' });
    await pub.publishAsync('strainward/brannock-mere/lg-thermal/scan', JSON.stringify({ ts: t0, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 });
    // The broker keeps what the processor cannot acknowledge: publishing does not wait for it.
    const published = (async () => {
      for (let k = 0; k < scans; k++) {
        const raw = readingsFromStress(g.model, [40 + (k % 50)], 14, Number.NaN, new Float64Array(1));
        await pub.publishAsync('strainward/brannock-mere/lg-span1/scan', JSON.stringify({ ts: t0 + 100 * k, values: { ch01: 0, ch02: 0, ch03: 0, ch04: raw[0] } }), { qos: 1 });
      }
    })();
    await until('the spool alarm', async () => (await spoolAlarms()).length > 0);
    const [raised] = await spoolAlarms();
    expect(raised.message).toMatchObject({ transition: 'raised', subject: { kind: 'component', component: 'spool' } });
    expect(raised.message!.action).toContain('ENOSPC');
    expect(db().spoolWriteFailure).toMatch(/^spool cannot be written: .*ENOSPC/);
    expect(db().spoolDiskFreeBytes).toBeLessThan(64 * 1024); // where fill ratio alone says almost empty
    expect(db().spoolFillRatio).toBeLessThan(0.001);
    expect(db().spoolLimitBytes).toBe(1024 ** 3);
    await new Promise((r) => setTimeout(r, 3000)); // three seconds of failing writes
    const failures = live.status().writeErrors as number;
    const failureLines = logged.filter((l) => l.event === 'write_failed');
    expect(failures).toBeGreaterThan(failureLines.length);
    expect(failureLines.length).toBeLessThanOrEqual(2); // the first at once, then one per 10 s
    expect(logged.filter((l) => l.event === 'spool_unwritable')).toHaveLength(1);

    // The database is back: the spool drains, appends succeed again, the alarm clears, nothing was lost.
    vm = await startVictoriaMetrics({ port, dataDir });
    servers.push(vm);
    await published;
    await until('every result stored', () => (live.status().frames as { results: number }).results >= 2 * scans && (live.status().mqtt as { heldAcks: number }).heldAcks === 0, 60_000);
    await until('the spool alarm cleared', async () => (await spoolAlarms()).some((l) => l.message?.transition === 'cleared'), 30_000);
    // Each failure is followed by its recovery (at the edge of the disk while the spool drains, one more
    // failure and recovery may come: seen in 1 of 3 runs on the project machine), and it ends writable.
    const writable = logged.filter((l) => l.event === 'spool_writable').length;
    expect(writable).toBeGreaterThanOrEqual(1);
    expect(writable).toBeLessThanOrEqual(2);
    expect(writable).toBe(logged.filter((l) => l.event === 'spool_unwritable').length);
    expect(db().spoolWriteFailure).toBeNull();
    await live.stop();
    await pub.endAsync();
    let s = { values: [] as number[], timestamps: [] as number[] };
    for (let i = 0; i < 50 && s.values.length < scans; i++) {
      await vm.forceFlush();
      s = (await vm.exportSeries('sw_result_stress_axial_MPa{group="flange-south-mid1"}'))[0] ?? s;
      if (s.values.length < scans) await new Promise((r) => setTimeout(r, 100));
    }
    // Every scan's result once, none fused or lost (Hooke's law both ways, within 1e-6 MPa).
    expect(s.timestamps).toEqual(Array.from({ length: scans }, (_, k) => t0 + 100 * k));
    s.values.forEach((v, k) => expect(Math.abs(v - (40 + (k % 50)))).toBeLessThan(1e-6));
  }, 150_000);
});
