/**
 * bench:pipeline - the live job end to end against real servers started here (Mosquitto and
 * VictoriaMetrics on free loopback ports, test/support/servers.ts), stopped even on failure.
 *
 * A child process plays a 32-channel logger (bench/support/bench-structure.ts) publishing QoS 1
 * scans whose `ts` is the publish time, with a window of in-flight publishes. Phases, each after
 * a warm-up:
 * 1. bare: an mqtt.js subscriber that only parses the JSON, scans as fast as the broker takes them;
 * 2. pipeline: `startLive` (decode, temperature join, stresses, database write, then PUBACK) as
 *    fast as the broker takes them; latency = logger ts to the pipeline's ack (bench/support/ack-observer.ts);
 * 3. steady: about 10,000 channel values/s, paced, for STEADY_S seconds;
 * 4. database alone, after the live job has stopped: the same number of scans, encoded beforehand,
 *    written through the same sink and settings (bench/support/database-alone.ts): the server's
 *    ceiling for this layout on this machine.
 * RSS is sampled every 50 ms throughout. Last printed line: one JSON object.
 * Environment (for quick looks): SW_BENCH_FRAMES, SW_BENCH_STEADY_S; SW_BENCH_MQTT and SW_BENCH_DATABASE,
 * JSON objects merged over the runtime configuration's `mqtt` and `database` sections (for example
 * SW_BENCH_DATABASE='{"gzip":"always","max_in_flight":1}'). Without them: the runtime defaults.
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startLive } from '../src/app/live.js';
import { parseRuntimeConfig } from '../src/config/load-runtime.js';
import { startMosquitto, startVictoriaMetrics } from '../test/support/servers.js';
import { AckObserver } from './support/ack-observer.js';
import { CpuMeter } from './support/cpu-meter.js';
import { measureDatabaseAlone } from './support/database-alone.js';
import { startBareSubscriber } from './support/bare-subscriber.js';
import { BENCH_LOGGER, CHANNELS_PER_FRAME, ROSETTES, benchStructure, scanValueBodies } from './support/bench-structure.js';
import * as perfHooks from 'node:perf_hooks';
import { GcTimer, liveHeapMb, RssSampler, round } from './support/measure.js';
import { startPublisher, type PublishJob, type PublishReport } from './support/publisher.js';

const envInt = (name: string, fallback: number) => (process.env[name] ? Number.parseInt(process.env[name]!, 10) : fallback);
const WARM_FRAMES = 3_000;
/** The bare subscriber is fast: more scans give it a measurable duration. */
const BARE_FRAMES = 60_000;
const PIPELINE_FRAMES = envInt('SW_BENCH_FRAMES', 20_000);
const WINDOW = 1_000;
const STEADY_VALUES_PER_S = 10_000;
const STEADY_FRAMES_PER_S = Math.ceil(STEADY_VALUES_PER_S / CHANNELS_PER_FRAME); // 313
const STEADY_S = envInt('SW_BENCH_STEADY_S', 20);
const STEADY_FRAMES = STEADY_FRAMES_PER_S * STEADY_S;
const PHASE_TIMEOUT_MS = 60_000;
/** Points written per frame: one result per rosette and one raw-readings point. */
const POINTS_PER_FRAME = ROSETTES + 1;
const TOPIC = `strainward/brannock-mere/${BENCH_LOGGER}/scan`;

const cleanups: Array<() => Promise<unknown>> = [];
async function cleanUp(): Promise<void> {
  while (cleanups.length > 0) await cleanups.pop()!().catch((e: unknown) => console.error('cleanup:', e));
}
for (const signal of ['SIGINT', 'SIGTERM'] as const) process.once(signal, () => { void cleanUp().finally(() => process.exit(130)); });

function withTimeout<T>(p: Promise<T>, what: string, ms = PHASE_TIMEOUT_MS): Promise<T> {
  let timer: ReturnType<typeof setTimeout>;
  const timeout = new Promise<never>((_, reject) => { timer = setTimeout(() => reject(new Error(`${what}: not done after ${ms} ms`)), ms); });
  return Promise.race([p, timeout]).finally(() => clearTimeout(timer));
}

async function untilTrue(cond: () => boolean, what: string, detail: () => unknown): Promise<void> {
  const deadline = Date.now() + PHASE_TIMEOUT_MS;
  while (!cond()) {
    if (Date.now() > deadline) throw new Error(`${what}: not done after ${PHASE_TIMEOUT_MS} ms: ${JSON.stringify(detail())}`);
    await new Promise((r) => setTimeout(r, 5));
  }
}

async function main(): Promise<Record<string, number>> {
  const rss = new RssSampler(50);
  cleanups.push(async () => rss.stop());
  const rssBoot = rss.sample();
  const structure = benchStructure();
  const bodies = scanValueBodies(structure, 256);
  const [brokerR, vmR] = await Promise.allSettled([startMosquitto(), startVictoriaMetrics()]);
  if (brokerR.status === 'fulfilled') cleanups.push(() => brokerR.value.stop());
  if (vmR.status === 'fulfilled') cleanups.push(() => vmR.value.stop());
  if (brokerR.status === 'rejected') throw brokerR.reason;
  if (vmR.status === 'rejected') throw vmR.reason;
  const broker = brokerR.value;
  const vm = vmR.value;
  const dir = await mkdtemp(join(tmpdir(), 'sw-bench-pipeline-'));
  cleanups.push(() => rm(dir, { recursive: true, force: true }));
  const publisher = await startPublisher(broker.url);
  cleanups.push(() => publisher.stop());
  let seq = 0;
  const job = (count: number, rate_per_s = 0): PublishJob => {
    const j = { topic: TOPIC, count, window: WINDOW, rate_per_s, seqStart: seq, bodies };
    seq += count;
    return j;
  };
  const payloadBytes = Buffer.byteLength(`{"ts":${Date.now()},"seq":${PIPELINE_FRAMES},"values":${bodies[0]}}`);
  console.log(`scan: ${CHANNELS_PER_FRAME} channels, ~${payloadBytes} bytes; QoS 1, window ${WINDOW} publishes; ${BARE_FRAMES} scans bare, ${PIPELINE_FRAMES} through the pipeline, then ${STEADY_S} s steady`);

  // Phase 1: the bare subscriber.
  const bare = await startBareSubscriber(broker.url, TOPIC);
  await withTimeout(Promise.all([bare.expect(WARM_FRAMES), publisher.publish(job(WARM_FRAMES))]), 'bare warm-up');
  const bareDone = bare.expect(BARE_FRAMES);
  const barePub = await withTimeout(publisher.publish(job(BARE_FRAMES)), 'bare publish');
  const bareRun = await withTimeout(bareDone, 'bare receive');
  await bare.close();
  const bareSeconds = (bareRun.lastMs - barePub.startMs) / 1000;
  const bareValuesPerS = bareRun.values / bareSeconds;
  console.log(`bare:     ${round(BARE_FRAMES / bareSeconds, 0)} frames/s, ${round(bareValuesPerS, 0)} values/s (broker took publishes at ${round(BARE_FRAMES / ((barePub.endMs - barePub.startMs) / 1000), 0)}/s), latency p50 ${bareRun.latency.percentile(50)} ms p99 ${bareRun.latency.percentile(99)} ms`);

  // Phase 2: the live pipeline at full rate, with the runtime defaults (gzip `auto`: none on loopback) unless overridden.
  const overrides = (name: string): Record<string, unknown> => (process.env[name] ? JSON.parse(process.env[name]!) as Record<string, unknown> : {});
  const rc = parseRuntimeConfig({
    schema_version: 1, structure: 'unused',
    mqtt: { url: broker.url, client_id: 'sw-bench-live', ...overrides('SW_BENCH_MQTT') },
    database: { url: vm.url, org: 'bench', bucket: 'bench', spool: { dir: join(dir, 'spool') }, ...overrides('SW_BENCH_DATABASE') },
    dead_letters: { file: join(dir, 'deadletters.ndjson') },
  }, 'bench');
  const events = new Map<string, number>();
  const live = await startLive({ runtime: rc, structure, baseDir: dir }, {
    now: Date.now, log: (event) => { events.set(event, (events.get(event) ?? 0) + 1); },
  });
  let liveStopped = false;
  cleanups.push(async () => { if (!liveStopped) await live.stop(); });
  const acks = new AckObserver(live.connection);
  const status = () => ({ acked: acks.acked, ...live.status() });
  const pipelineJobs: PublishReport[] = [];

  acks.reset(WARM_FRAMES);
  pipelineJobs.push(await withTimeout(publisher.publish(job(WARM_FRAMES)), 'pipeline warm-up publish'));
  await untilTrue(() => acks.acked >= WARM_FRAMES, 'pipeline warm-up', status);

  acks.reset(PIPELINE_FRAMES);
  const heapStart = liveHeapMb();
  const rssStart = rss.sample();
  let rssMid = Number.NaN;
  acks.onAck = (n) => { if (n === PIPELINE_FRAMES / 2) rssMid = rss.sample(); };
  const cpu = new CpuMeter({ victoriametrics: vm.pid, mosquitto: broker.pid, publisher: publisher.pid });
  const gc = new GcTimer(perfHooks);
  const pipePub = await withTimeout(publisher.publish(job(PIPELINE_FRAMES)), 'pipeline publish');
  pipelineJobs.push(pipePub);
  await untilTrue(() => acks.acked >= PIPELINE_FRAMES, 'pipeline', status);
  const rssEnd = rss.sample();
  const cpuPipeline = cpu.percent();
  gc.stop();
  const framesPerS = PIPELINE_FRAMES / ((acks.lastAckMs - pipePub.startMs) / 1000);
  const valuesPerS = framesPerS * CHANNELS_PER_FRAME;
  const p50 = acks.latency.percentile(50);
  const p99 = acks.latency.percentile(99);
  console.log(`pipeline: ${round(framesPerS, 0)} frames/s, ${round(valuesPerS, 0)} values/s, ratio to bare ${round(valuesPerS / bareValuesPerS, 3)}; latency p50 ${p50} ms p99 ${p99} ms (saturated: includes the backlog)`);
  console.log(`          rss start ${round(rssStart)} MB, middle ${round(rssMid)} MB, end ${round(rssEnd)} MB (boot ${round(rssBoot)} MB)`);
  console.log(`          CPU, % of one core (2 on this machine): strainward ${cpuPipeline.self}, VictoriaMetrics ${cpuPipeline.victoriametrics}, Mosquitto ${cpuPipeline.mosquitto}, publisher ${cpuPipeline.publisher}; garbage collection ${round(gc.ms, 0)} ms in ${gc.count} pauses (${round(gc.ms / PIPELINE_FRAMES * 1000, 1)} us per scan)`);

  // Phase 3: steady ~10,000 values/s.
  const heapAfterSaturation = liveHeapMb();
  acks.reset(STEADY_FRAMES);
  const rssSteadyStart = rss.sample();
  let rssSteadyMid = Number.NaN;
  acks.onAck = (n) => { if (n === Math.floor(STEADY_FRAMES / 2)) rssSteadyMid = rss.sample(); };
  const steadyPub = await withTimeout(publisher.publish(job(STEADY_FRAMES, STEADY_FRAMES_PER_S)), 'steady publish', (STEADY_S + 30) * 1000);
  pipelineJobs.push(steadyPub);
  await untilTrue(() => acks.acked >= STEADY_FRAMES, 'steady', status);
  const rssSteadyEnd = rss.sample();
  const heapSteadyEnd = liveHeapMb();
  const steadyValuesPerS = (STEADY_FRAMES * CHANNELS_PER_FRAME) / ((steadyPub.endMs - steadyPub.startMs) / 1000);
  const steadyP50 = acks.latency.percentile(50);
  const steadyP99 = acks.latency.percentile(99);
  console.log(`steady:   ${round(steadyValuesPerS, 0)} values/s offered (publisher behind schedule at most ${steadyPub.maxBehindSchedule} scans); latency p50 ${steadyP50} ms p99 ${steadyP99} ms max ${acks.latency.percentile(100)} ms, of which logger to pipeline process p50 ${acks.arrival.percentile(50)} ms p99 ${acks.arrival.percentile(99)} ms`);
  console.log(`          rss start ${round(rssSteadyStart)} MB, middle ${round(rssSteadyMid)} MB, end ${round(rssSteadyEnd)} MB; peak over the run ${round(rss.peak_mb)} MB`);
  console.log(`memory:   live heap after a full collection: before the saturated run ${round(heapStart)} MB, after it ${round(heapAfterSaturation)} MB, after the steady run ${round(heapSteadyEnd)} MB`);

  const peakRss = rss.peak_mb;
  liveStopped = true;
  await live.stop();
  rss.stop();
  // Phase 4 (after the live job has stopped, its memory figures taken): the database alone, same layout, same sink settings.
  const alone = await measureDatabaseAlone(structure, rc.database!, join(dir, 'spool-alone'), BENCH_LOGGER, bodies, PIPELINE_FRAMES, Date.now() - 3_600_000, { victoriametrics: vm.pid });
  console.log(`database alone: ${round(alone.frames_per_s, 0)} frames/s (${alone.values_per_frame} values, ${alone.bytes_per_frame} bytes of line protocol per scan, encoded beforehand); the pipeline reached ${round(framesPerS / alone.frames_per_s, 3)} of it, and 0.5 of bare would need ${round((0.5 * bareValuesPerS / CHANNELS_PER_FRAME) / alone.frames_per_s, 2)} times it`);
  console.log(`          CPU, % of one core: the sink ${alone.cpu_pct.self}, VictoriaMetrics ${alone.cpu_pct.victoriametrics}`);

  const frames = pipelineJobs.reduce((s, j) => s + j.published, 0);
  const db = live.status().database as { writtenPoints: number; spooledPoints: number; refusedPoints: number };
  const decode = live.status().decode as { accepted: number; rejected: number };
  console.log(`database: ${db.writtenPoints} points written (expected ${frames * POINTS_PER_FRAME}), spooled ${db.spooledPoints}, refused ${db.refusedPoints}; decoded ${decode.accepted}, rejected ${decode.rejected}; log events ${JSON.stringify(Object.fromEntries(events))}`);
  if (db.writtenPoints !== frames * POINTS_PER_FRAME || decode.rejected !== 0) throw new Error('the pipeline did not write every point');
  // The server answers 204 before the samples are searchable: read back until all are there (up to 3 s).
  let seen = new Set<number>();
  for (let attempt = 0; attempt < 7 && seen.size < frames; attempt++) {
    if (attempt > 0) await new Promise((r) => setTimeout(r, 500));
    await vm.forceFlush();
    seen = new Set((await vm.exportSeries(`sw_raw_seq{logger="${BENCH_LOGGER}",run=""}`)).flatMap((x) => x.values));
  }
  const missing = [...Array(seq).keys()].filter((k) => k >= WARM_FRAMES + BARE_FRAMES && !seen.has(k));
  console.log(`database: ${seen.size} of ${frames} raw scans read back from the server${missing.length ? `; missing seq ${missing.slice(0, 12).join(', ')}${missing.length > 12 ? ' ...' : ''}` : ''}`);

  return {
    frames_per_s: round(framesPerS, 0), values_per_s: round(valuesPerS, 0), bare_values_per_s: round(bareValuesPerS, 0),
    ratio: round(valuesPerS / bareValuesPerS, 3), p50_ms: p50, p99_ms: p99, peak_rss_mb: round(peakRss),
    cpu_pct_strainward: cpuPipeline.self, gc_us_per_frame: round(gc.ms / PIPELINE_FRAMES * 1000, 1), cpu_pct_database: cpuPipeline.victoriametrics, cpu_pct_broker: cpuPipeline.mosquitto,
    db_alone_frames_per_s: round(alone.frames_per_s, 0), ratio_to_db_alone: round(framesPerS / alone.frames_per_s, 3),
    db_alone_ratio_to_bare: round((alone.frames_per_s * CHANNELS_PER_FRAME) / bareValuesPerS, 3),
    steady_values_per_s: round(steadyValuesPerS, 0), steady_p50_ms: steadyP50, steady_p99_ms: steadyP99,
    rss_start_mb: round(rssStart), rss_mid_mb: round(rssMid), rss_end_mb: round(rssEnd),
    steady_rss_start_mb: round(rssSteadyStart), steady_rss_end_mb: round(rssSteadyEnd),
    heap_start_mb: round(heapStart), heap_after_saturation_mb: round(heapAfterSaturation), heap_after_steady_mb: round(heapSteadyEnd),
    frames: PIPELINE_FRAMES, channels_per_frame: CHANNELS_PER_FRAME,
  };
}

try {
  const figures = await main();
  await cleanUp();
  console.log(JSON.stringify({ bench: 'pipeline', ...figures }));
} catch (err) {
  console.error(err);
  await cleanUp();
  console.log(JSON.stringify({ bench: 'pipeline', error: String(err instanceof Error ? err.message : err) }));
  process.exitCode = 1;
}
