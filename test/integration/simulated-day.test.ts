/**
 * End to end with the simulator's ground truth. Starts real Mosquitto and VictoriaMetrics on free
 * loopback ports (and a recording proxy in front of the database, to see the written lines at full
 * precision); the simulator publishes a compressed day of the invented deck with every fault kind;
 * the live processor records a raw capture while it runs; the capture is then replayed.
 */
import { mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { createServer, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeLines } from '../../src/adapters/lineproto/decode.js';
import { encodeLines } from '../../src/adapters/lineproto/encode.js';
import { readCapture } from '../../src/adapters/capture/capture-reader.js';
import { MemorySink } from '../../src/adapters/memory-sink.js';
import { startLive } from '../../src/app/live.js';
import { replay } from '../../src/app/replay.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { loadStructureFile } from '../../src/config/load.js';
import { parseRuntimeConfig } from '../../src/config/load-runtime.js';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput } from '../../src/mechanics/group-model.js';
import type { Point } from '../../src/model/point.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { stressNoiseSd } from '../../simulators/noise-model.js';
import { mqttSink, runSimulation } from '../../simulators/outputs.js';
import { createSimulation, type SimScan } from '../../simulators/run.js';
import { parseScenario, type Scenario } from '../../simulators/scenario.js';
import { startRecordingProxy, type RecordingProxy } from '../support/recording-proxy.js';
import { startMosquitto, startVictoriaMetrics } from '../support/servers.js';

const GROUP_FIELDS: Record<string, string[]> = {
  plane_rosette: ['stress_xx_MPa', 'stress_yy_MPa', 'stress_xy_MPa'],
  single: ['stress_axial_MPa'],
  solid_cluster: ['stress_xx_MPa', 'stress_yy_MPa', 'stress_zz_MPa', 'stress_yz_MPa', 'stress_xz_MPa', 'stress_xy_MPa'],
};

describe('a simulated compressed day through the live pipeline', () => {
  let broker: Awaited<ReturnType<typeof startMosquitto>>;
  let vm: Awaited<ReturnType<typeof startVictoriaMetrics>>;
  let proxy: RecordingProxy;
  let structure: CompiledStructure;
  let dir: string;
  let scans: SimScan[];
  let liveResults: Point[];
  let alarmPoints: Point[];
  let scn: Scenario;
  let receiver: Server;
  const webhookBodies: string[] = [];

  beforeAll(async () => {
    [broker, vm] = await Promise.all([startMosquitto(), startVictoriaMetrics()]);
    proxy = await startRecordingProxy(vm.url);
    dir = await mkdtemp(join(tmpdir(), 'sw-day-'));
    // The crews' webhooks go to a receiver of this test (the example file names a fixed loopback port).
    receiver = createServer((req, res) => {
      let body = '';
      req.on('data', (c) => { body += c; });
      req.on('end', () => { webhookBodies.push(body); res.writeHead(204).end(); });
    });
    await new Promise<void>((r) => receiver.listen(0, '127.0.0.1', () => r()));
    const port = (receiver.address() as { port: number }).port;
    const yaml = (await readFile('config/brannock-mere.yaml', 'utf8')).replaceAll('http://127.0.0.1:8470/', `http://127.0.0.1:${port}/`);
    await writeFile(join(dir, 'structure.yaml'), yaml);
    structure = await loadStructureFile(join(dir, 'structure.yaml'));
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      mqtt: { url: broker.url, client_id: 'strainward-test-day' },
      database: { url: proxy.url, org: 'test', bucket: 'live', spool: { dir: join(dir, 'spool') }, flush_interval_ms: 50 },
      dead_letters: { file: join(dir, 'deadletters.ndjson') },
      capture: { dir: join(dir, 'capture'), flush_every_ms: 200 },
      alarms: { state_file: join(dir, 'alarm-state.json'), log_file: join(dir, 'alarms.ndjson') },
      tick_ms: 200,
      // The slab logger's clock drifts to 6 s ahead by the end (100,000 ppm over 60 s) and the publisher
      // starts up to 2 s early: within this tolerance its scans are results (and a clock alarm), not refusals.
      ingest: { max_future_s: 15 },
    }, 'test');
    const live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: () => {} });
    // 60 s published in real time (the logger clocks must agree with the processor's for the clock
    // check), a 24 h temperature cycle compressed into 3600 s, one heavy vehicle at 20 s, and every
    // fault kind placed so that each can be seen within the run.
    const start = Math.ceil(Date.now() / 1000) * 1000 + 1000;
    scn = parseScenario({
      ...defaultScenario({ seed: 42, start_ms: start, duration_s: 60, day_s: 3600 }),
      restraint: null,
      heavy_vehicles: [{ at_s: 20, gross_kN: 1000 }],
      faults: [
        { kind: 'debond', id: 'debond-rw-sp-c', gauge: 'rw-sp-c', start_s: 5, drift_micro_per_h: 7200 },
        { kind: 'dropout', id: 'dropout-span1-ch04', logger: 'lg-span1', channel: 'ch04', start_s: 10, end_s: 16 },
        { kind: 'spikes', id: 'spikes-pier-ch01', logger: 'lg-pier', channel: 'ch01', start_s: 5, end_s: 55, count: 6, magnitude: 0.25 },
        { kind: 'open_circuit', id: 'open-span1-ch02', logger: 'lg-span1', channel: 'ch02', start_s: 35, end_s: 40 },
        { kind: 'clock_drift', id: 'clock-slab', logger: 'lg-slab', start_s: 15, drift_ppm: 100_000 },
        { kind: 'silent', id: 'silent-thermal', logger: 'lg-thermal', start_s: 28, end_s: 60 },
      ],
    });
    const sim = createSimulation(structure, scn);
    scans = [...sim.scans()];
    await runSimulation(sim, scn, {
      outDir: join(dir, 'sim'), sinks: [await mqttSink(broker.url)], speed: 1, now: Date.now,
      sleep: (ms) => new Promise((r) => setTimeout(r, ms)),
    });
    const expectedResults = scans.reduce((n, s) => n + s.truth.length, 0);
    const deadline = Date.now() + 30_000;
    while ((live.status().frames as { results: number }).results < expectedResults && Date.now() < deadline) await new Promise((r) => setTimeout(r, 100));
    await live.stop();
    const written = decodeLines(proxy.acceptedLines.join('\n'));
    liveResults = written.filter((p) => p.measurement === 'sw_result');
    alarmPoints = written.filter((p) => p.measurement === 'sw_alarm');
  }, 150_000);

  afterAll(async () => {
    await new Promise((r) => receiver?.close(r));
    await proxy?.stop();
    await Promise.all([broker?.stop(), vm?.stop()]);
  });

  it('writes one result per group and scan', () => {
    expect(liveResults.length).toBe(scans.reduce((n, s) => n + s.truth.length, 0));
  });

  it('matches the truth within the tolerance derived from the noise model', () => {
    // Derivation: the result error is the reading noise propagated through the reduction
    // (sd from stressNoiseSd: reading noise and quantisation, through the pseudo-inverse and
    // stiffness, first order) plus the effect of the temperature the pipeline used differing from the
    // true one (thermocouple noise, time between thermocouple scans): |d sigma/d T| |T_used - T_true|,
    // with d sigma/d T taken by finite difference through the core. Bound: 5 sd + that term + 1e-6.
    // Results carrying a quality flag, or touched by an injected fault, are not accuracy checks.
    const byKey = new Map(liveResults.map((p) => [`${p.tags.group}@${p.timeMs}`, p]));
    let checked = 0;
    let worstRatio = 0;
    for (const scan of scans) {
      for (const t of scan.truth) {
        if (t.faults.length > 0) continue;
        const p = byKey.get(`${t.group}@${t.logger_ts_ms}`);
        expect(p, `${t.group} at ${t.logger_ts_ms}`).toBeDefined();
        if (p!.fields.quality_bits !== 0) continue;
        const g = structure.groupsById.get(t.group)!;
        const raw = Float64Array.from(g.elementChannels, (ch) => scan.values[ch] ?? Number.NaN);
        const comp = g.companion ? scan.values[g.companion.channelId] ?? Number.NaN : Number.NaN;
        const used = p!.fields.temperature_degC;
        const sd = stressNoiseSd(g.model, raw, used, g.model.elements.map((el) => readingSd(scn, el.signal)), comp,
          g.model.companion ? readingSd(scn, g.model.companion.signal) : 0);
        const at = (tc: number) => {
          const out = createGroupOutput(g.model.m);
          evaluateGroup(g.model, raw, tc, comp, out);
          return GROUP_FIELDS[g.config.kind].map((f) => f === 'stress_axial_MPa' ? out.axialStressMPa : out.stressMPa[['xx', 'yy', 'zz', 'yz', 'xz', 'xy'].indexOf(f.slice(7, 9))]);
        };
        const dSdT = at(used + 0.5).map((v, k) => (v - at(used - 0.5)[k]));
        GROUP_FIELDS[g.config.kind].forEach((f, k) => {
          const err = Math.abs(p!.fields[f] - t.stress_MPa[k]);
          const tol = 5 * sd[k] + Math.abs(dSdT[k]) * Math.abs(used - t.temperature_degC) + 1e-6;
          worstRatio = Math.max(worstRatio, err / tol);
          expect(err, `${t.group} ${f} at ${t.logger_ts_ms}: sd ${sd[k]}`).toBeLessThan(tol);
        });
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(500);
    expect(worstRatio).toBeGreaterThan(0.05); // the tolerance is not absurdly loose
  });

  it('raises the health alarm each injected fault should, on the right instrument', () => {
    const raised = alarmPoints.filter((p) => p.tags.transition === 'raised' && p.tags.alarm_class === 'health')
      .map((p) => `${p.tags.rule} ${p.tags.channel ? `${p.tags.logger}/${p.tags.channel}` : p.tags.group ?? p.tags.logger}`);
    for (const expected of [
      'residual_high web-south-pier', // debonding element of the redundant rosette
      'channel_missing lg-span1/ch04', 'result_incomplete flange-south-mid1', // dropout
      'spike lg-pier/ch01', // spikes
      'out_of_range lg-span1/ch02', 'result_incomplete flange-north-mid1', // open circuit
      'clock_offset lg-slab', // a logger clock running ahead
      'no_data lg-thermal', // a silent logger: silence is an alarm
    ]) expect(raised, expected).toContain(expected);
  });

  it('raises structural alarms only for the heavy vehicle, and routes them to the deck crew', () => {
    const structural = alarmPoints.filter((p) => p.tags.alarm_class === 'structural' && p.tags.transition === 'raised');
    expect(structural.length).toBeGreaterThan(0);
    const heavyFrom = scn.start_ms + 20_000, heavyTo = scn.start_ms + 35_000; // entering at 20 s, off the deck by 35 s
    for (const p of structural) expect(p.timeMs, `${p.tags.rule} ${p.tags.group}`).toBeGreaterThanOrEqual(heavyFrom);
    for (const p of structural) expect(p.timeMs, `${p.tags.rule} ${p.tags.group}`).toBeLessThanOrEqual(heavyTo);
    expect(structural.map((p) => `${p.tags.rule} ${p.tags.group}`)).toContain('steel-von-mises flange-north-mid1');
    const toDeckCrew = webhookBodies.map((b) => JSON.parse(b)).filter((b) => b.alarm_class === 'structural');
    expect(toDeckCrew.length).toBeGreaterThan(0);
  });

  it('replays the capture recorded during the run into exactly the live results', async () => {
    const sink = new MemorySink();
    const summary = await replay({
      structure, messages: readCapture(join(dir, 'capture')), sink, runTag: 'check', tickMs: 200, speed: 0,
      deadLetters: { write: async () => {} }, sleep: async () => {}, maxFutureMs: 15_000, // the live run's ingest.max_future_s
    });
    expect(summary.messages).toBe(scans.length);
    const strip = (points: readonly Point[]) => encodeLines(points.filter((p) => p.measurement === 'sw_result')
      .map((p) => { const { run: _run, ...tags } = p.tags; return { ...p, tags }; }));
    const [a, b] = [strip(sink.points), strip(liveResults)];
    const firstDiff = a.findIndex((line, i) => line !== b[i]);
    expect(firstDiff, `first difference at line ${firstDiff}:\n${a[firstDiff]}\n${b[firstDiff]}`).toBe(-1);
    expect(strip(sink.points)).toEqual(strip(liveResults));
  });
});

/** Effective reading sd of a signal code (0 microstrain, 1 mV/V, 2 Hz, 3 digits): sqrt(sigma^2 + step^2 / 12), q^2/12 the variance of a uniform rounding error (common practice). */
function readingSd(scn: Scenario, signal: number): number {
  const unit = (['microstrain', 'mV/V', 'Hz', 'digits'] as const)[signal];
  return Math.sqrt(scn.noise.sigma[unit] ** 2 + scn.noise.step[unit] ** 2 / 12);
}
