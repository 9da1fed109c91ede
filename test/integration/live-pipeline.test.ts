/**
 * The live job against real servers: Mosquitto (broker) and VictoriaMetrics (time-series database,
 * InfluxDB v2 write API), both started here on free loopback ports and stopped at the end.
 */
import { mkdtemp, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { loadStructureFile } from '../../src/config/load.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { companionReading, readingsFromStress } from '../../src/mechanics/forward-model.js';
import { qualityBit } from '../../src/model/quality.js';
import { startMosquitto, startVictoriaMetrics } from '../support/servers.js';

type Server = Awaited<ReturnType<typeof startMosquitto>>;
type Vm = Awaited<ReturnType<typeof startVictoriaMetrics>>;

const T0 = Date.UTC(2026, 10, 20, 6, 0, 0);
/** Temperature field of the test: linear in time, so interpolation between readings is exact. */
const tempAt = (ms: number) => 12 + (0.5 * (ms - T0)) / 1000;
/** Thermocouple readings every 2 s for the first 8 s only; later frames find stale temperature. */
const THERMAL_TIMES = [0, 2000, 4000, 6000, 8000].map((d) => T0 + d);
const lastThermalAt = (ms: number) => THERMAL_TIMES.filter((t) => t <= ms).at(-1) ?? THERMAL_TIMES[0];

interface Truth { group: string; timeMs: number; stress: number[]; stale: boolean }

/** The stress each group carries at time ms: a smooth invented history, different per group. */
function stressOf(kind: string, k: number): number[] {
  if (kind === 'plane_rosette') return [60 + 20 * Math.sin(k / 3), -15 + 5 * Math.cos(k / 5), 25 * Math.sin(k / 7)];
  if (kind === 'single') return [90 + 30 * Math.sin(k / 4)];
  return [-3 + Math.sin(k / 3), -1.5, 0.2, 0.3 * Math.cos(k / 2), -0.4, 0.8];
}

function buildMessages(structure: CompiledStructure): { messages: Array<{ topic: string; payload: string }>; truth: Truth[] } {
  const messages: Array<{ topic: string; payload: string; t: number }> = [];
  const truth: Truth[] = [];
  const topic = (logger: string) => `strainward/${structure.structureId}/${logger}/scan`;
  for (const t of THERMAL_TIMES) {
    const v = tempAt(t);
    messages.push({ topic: topic('lg-thermal'), t, payload: JSON.stringify({ ts: new Date(t).toISOString(), values: { t1: v, t2: v, t3: v, t4: v } }) });
  }
  // Strain scans: lg-pier and lg-span1 at 10 Hz for 7 s, lg-slab at 1 Hz; then a late batch at +100 s (stale temperature).
  const schedule: Array<[string, number[]]> = [
    ['lg-pier', [...Array.from({ length: 70 }, (_, i) => T0 + 100 * i), T0 + 100_000, T0 + 100_100]],
    ['lg-span1', Array.from({ length: 70 }, (_, i) => T0 + 50 + 100 * i)],
    ['lg-slab', [...Array.from({ length: 7 }, (_, i) => T0 + 1000 * i), T0 + 100_000]],
  ];
  for (const [logger, times] of schedule) {
    times.forEach((t, seq) => {
      const values: Record<string, number> = {};
      for (const g of structure.groupsByLogger.get(logger)!) {
        const interpolate = g.config.temperature.mode === 'interpolate';
        // Interpolating groups see the exact linear field; `last` groups the latest reading at or before t.
        const temp = interpolate && t <= THERMAL_TIMES.at(-1)! ? tempAt(t) : tempAt(lastThermalAt(t));
        const stress = stressOf(g.config.kind, seq);
        const free = g.model.companion ? -120 + 2 * (temp - 12) : Number.NaN;
        const raw = readingsFromStress(g.model, stress, temp, free, new Float64Array(g.model.m));
        g.elementChannels.forEach((ch, i) => { values[ch] = raw[i]; });
        if (g.companion) values[g.companion.channelId] = companionReading(g.model, free, temp);
        truth.push({ group: g.config.id, timeMs: t, stress, stale: t - lastThermalAt(t) > g.config.temperature.max_age_s * 1000 });
      }
      messages.push({ topic: topic(logger), t, payload: JSON.stringify({ ts: t, seq, values }) });
    });
  }
  messages.sort((a, b) => a.t - b.t); // loggers publish as time goes by
  return { messages, truth };
}

const BAD_MESSAGES = [
  { topic: 'strainward/brannock-mere/lg-pier/scan', payload: '{"ts": 1763618400000, "values": {"ch01": 0.1' },
  { topic: 'strainward/brannock-mere/lg-pier/scan', payload: '{"ts": 1763618400000, "values": {"ch01": "0.12"}}' },
  { topic: 'strainward/brannock-mere/lg-pier/scan', payload: '{"ts": 1763618400000, "values": {"ch99": 0.1}}' },
  { topic: 'strainward/brannock-mere/lg-pier/scan', payload: '{"ts": 1763618400000, "values": {"ch01": 1e999}}' },
];

describe('live pipeline: MQTT in, stresses out to the time-series database', () => {
  let broker: Server;
  let vm: Vm;
  let live: LiveProcessor;
  let structure: CompiledStructure;
  let dir: string;
  let truth: Truth[];

  beforeAll(async () => {
    [broker, vm] = await Promise.all([startMosquitto(), startVictoriaMetrics()]);
    dir = await mkdtemp(join(tmpdir(), 'sw-live-'));
    structure = await loadStructureFile('config/brannock-mere.yaml');
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      mqtt: { url: broker.url, client_id: 'strainward-test-live' },
      database: { url: vm.url, org: 'test', bucket: 'live', spool: { dir: join(dir, 'spool') }, flush_interval_ms: 50 },
      dead_letters: { file: join(dir, 'deadletters.ndjson') },
      tick_ms: 200,
    }, 'test');
    live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: () => {} });
    const built = buildMessages(structure);
    truth = built.truth;
    const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-loggers', protocolVersion: 5 });
    for (const m of [...built.messages.slice(0, 40), ...BAD_MESSAGES, ...built.messages.slice(40)]) await pub.publishAsync(m.topic, m.payload, { qos: 1 });
    await pub.endAsync();
    // web-north-pier interpolates with max_wait_s 6: its late frames wait 6 s of pipeline clock for a newer temperature.
    const deadline = Date.now() + 30_000;
    while ((live.status().frames as { results: number }).results < truth.length && Date.now() < deadline) await new Promise((r) => setTimeout(r, 100));
    await live.stop();
    await vm.forceFlush();
  });

  afterAll(async () => {
    await Promise.all([broker?.stop(), vm?.stop()]);
  });

  it('writes exactly one result point per group and frame, equal to the mechanics core within 1e-6 MPa', async () => {
    const components: Record<string, Array<[string, number]>> = {
      plane_rosette: [['stress_xx_MPa', 0], ['stress_yy_MPa', 1], ['stress_xy_MPa', 2]],
      single: [['stress_axial_MPa', 0]],
      solid_cluster: [['stress_xx_MPa', 0], ['stress_yy_MPa', 1], ['stress_zz_MPa', 2], ['stress_yz_MPa', 3], ['stress_xz_MPa', 4], ['stress_xy_MPa', 5]],
    };
    for (const g of structure.groups) {
      const expected = truth.filter((t) => t.group === g.config.id);
      for (const [field, k] of components[g.config.kind]) {
        const series = await vm.exportSeries(`sw_result_${field}{group="${g.config.id}"}`);
        expect(series, `${g.config.id} ${field}`).toHaveLength(1);
        const s = series[0];
        expect(s.metric).toMatchObject({ structure: 'brannock-mere', zone: g.config.zone, logger: g.loggerId });
        expect(s.values.length, `${g.config.id} ${field} count`).toBe(expected.length);
        expect(s.timestamps).toEqual(expected.map((t) => t.timeMs));
        const off = expected.flatMap((t, i) => (Math.abs(s.values[i] - t.stress[k]) < 1e-6 ? [] : [`${i}: ${s.values[i] - t.stress[k]}`]));
        if (off.length) console.log(g.config.id, field, off.join(" / "));
        expect(off, `${g.config.id} ${field}`).toEqual([]);
      }
    }
  });

  it('flags results whose temperature was stale, and only those', async () => {
    const staleBit = qualityBit('temperature_stale');
    for (const groupId of ['web-north-pier', 'slab-mid1', 'web-south-pier']) {
      const expected = truth.filter((t) => t.group === groupId);
      const [bits] = await vm.exportSeries(`sw_result_quality_bits{group="${groupId}"}`);
      expect(bits.values.map((b) => (b & staleBit) !== 0 ? 1 : 0), groupId).toEqual(expected.map((t) => (t.stale ? 1 : 0)));
      // The flag field is written only on the results that carry the flag.
      const flagged = await vm.exportSeries(`sw_result_flag_temperature_stale{group="${groupId}"}`);
      expect(flagged.flatMap((f) => f.timestamps), groupId).toEqual(expected.filter((t) => t.stale).map((t) => t.timeMs));
      expect(flagged.flatMap((f) => f.values).every((v) => v === 1), groupId).toBe(true);
    }
    expect(truth.filter((t) => t.stale).length).toBe(3); // 2 pier frames + 1 slab frame at +100 s
  });

  it('keeps the raw readings as the archive for diagnosis', async () => {
    const [s] = await vm.exportSeries('sw_raw_ch01{logger="lg-pier"}');
    expect(s.values.length).toBe(72);
  });

  it('sends bad messages to the dead-letter record with reasons, the original bytes, and counts them', async () => {
    const lines = (await readFile(join(dir, 'deadletters.ndjson'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l));
    expect(lines).toHaveLength(4);
    const reasons = lines.map((l) => l.rejections.map((r: { code: string; path: string }) => `${r.code} ${r.path}`).join('; '));
    expect(reasons[0]).toMatch(/^not_json/);
    expect(reasons[1]).toBe('invalid_payload values.ch01');
    expect(reasons[2]).toBe('unknown_channel values.ch99');
    expect(reasons[3]).toBe('non_finite_value values.ch01');
    expect(Buffer.from(lines[0].payloadBase64, 'base64').toString()).toBe(BAD_MESSAGES[0].payload);
    expect((live.status().decode as { rejected: number }).rejected).toBe(4);
  });
});
