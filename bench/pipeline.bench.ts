/**
 * bench:pipeline - the live job end to end against real servers started here (Mosquitto and
 * VictoriaMetrics on free loopback ports, test/support/servers.ts), stopped even on failure.
 *
 * A child process plays a 32-channel logger (bench/support/bench-structure.ts) publishing QoS 1
 * scans whose `ts` is the publish time, with a window of in-flight publishes. Phases, each after
 * a warm-up:
 * 1. bare: an mqtt.js subscriber that only parses the JSON, scans as fast as the broker takes them;
 * 2. the full policy (every result and scan to the database): `startLive` (decode, temperature
 *    join, stresses, database write, then PUBACK) as fast as the broker takes them, latency =
 *    logger ts to the pipeline's ack (bench/support/ack-observer.ts); then steady, about 10,000
 *    channel values/s, paced, for STEADY_S seconds;
 * 3. the summary policy (BENCH_SUMMARY_STORAGE: 1 s summaries of every group and of the raw
 *    readings, event windows configured), the same two runs, a new live job;
 * 4. database alone, after the live jobs have stopped: the same number of scans, encoded beforehand,
 *    written through the same sink and settings (bench/support/database-alone.ts): the server's
 *    ceiling for this layout on this machine.
 * RSS is sampled every 50 ms throughout. Last printed line: one JSON object.
 * Environment (for quick looks): SW_BENCH_FRAMES, SW_BENCH_STEADY_S; SW_BENCH_MQTT and SW_BENCH_DATABASE,
 * JSON objects merged over the runtime configuration's `mqtt` and `database` sections (for example
 * SW_BENCH_DATABASE='{"gzip":"always","max_in_flight":1}'). Without them: the runtime defaults.
 * SW_BENCH_CPU_PROFILE=DIR: a CPU profile of each policy's saturated run, DIR/<policy>.cpuprofile
 * (bench/support/profile-top.mjs lists it by self time).
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { startLive } from '../src/app/live.js';
import { parseRuntimeConfig } from '../src/config/load-runtime.js';
import { startMosquitto, startVictoriaMetrics } from '../test/support/servers.js';
import { AckObserver } from './support/ack-observer.js';
import { CpuMeter } from './support/cpu-meter.js';
import { measureDatabaseAlone } from './support/database-alone.js';
import { startBareSubscriber } from './support/bare-subscriber.js';
import { BENCH_LOGGER, BENCH_SUMMARY_STORAGE, CHANNELS_PER_FRAME, ROSETTES, benchStructure, scanValueBodies } from './support/bench-structure.js';
import type { CompiledStructure } from '../src/config/compile.js';
import type { StorageCounts } from '../src/pipeline/storage-stage.js';
import * as perfHooks from 'node:perf_hooks';
import { GcTimer, liveHeapMb, RssSampler, round } from './support/measure.js';
import { startPublisher, type PublishJob, type PublishReport } from './support/publisher.js';
import { startCpuProfile } from './support/cpu-profile.js';

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

async function main(): Promise<Record<string, number | string>> {
  const loadStart = loadavg()[0];
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

  // Phases 2 and 3: the live job with each storage policy, one after the other on the same servers.
  const overrides = (name: string): Record<string, unknown> => (process.env[name] ? JSON.parse(process.env[name]!) as Record<string, unknown> : {});
  const runPolicy = async (policy: 'full' | 'summary', s: CompiledStructure): Promise<PolicyRun> => {
    const policyDir = join(dir, policy);
    const rc = parseRuntimeConfig({
      schema_version: 1, structure: 'unused',
      // Session expiry 0: the stopped job's session must not go on queueing the next job's scans.
      mqtt: { url: broker.url, client_id: `sw-bench-${policy}`, session_expiry_s: 0, ...overrides('SW_BENCH_MQTT') },
      database: { url: vm.url, org: 'bench', bucket: 'bench', spool: { dir: join(policyDir, 'spool') }, ...overrides('SW_BENCH_DATABASE') },
      dead_letters: { file: join(policyDir, 'deadletters.ndjson') },
    }, 'bench');
    const events = new Map<string, number>();
    const live = await startLive({ runtime: rc, structure: s, baseDir: policyDir }, {
      now: Date.now, log: (event) => { events.set(event, (events.get(event) ?? 0) + 1); },
    });
    let liveStopped = false;
    cleanups.push(async () => { if (!liveStopped) await live.stop(); });
    const acks = new AckObserver(live.connection);
    const status = () => ({ acked: acks.acked, ...live.status() });
    const jobs: PublishReport[] = [];

    acks.reset(WARM_FRAMES);
    jobs.push(await withTimeout(publisher.publish(job(WARM_FRAMES)), `${policy}: warm-up publish`));
    await untilTrue(() => acks.acked >= WARM_FRAMES, `${policy}: warm-up`, status);

    acks.reset(PIPELINE_FRAMES);
    const heapStart = liveHeapMb();
    const rssStart = rss.sample();
    let rssMid = Number.NaN;
    acks.onAck = (n) => { if (n === PIPELINE_FRAMES / 2) rssMid = rss.sample(); };
    const cpu = new CpuMeter({ victoriametrics: vm.pid, mosquitto: broker.pid, publisher: publisher.pid });
    const cpuStart = process.cpuUsage();
    const gc = new GcTimer(perfHooks);
    const loopDelay = perfHooks.monitorEventLoopDelay({ resolution: 5 });
    loopDelay.enable();
    const profile = process.env.SW_BENCH_CPU_PROFILE ? await startCpuProfile(process.env.SW_BENCH_CPU_PROFILE, policy) : null;
    const pipePub = await withTimeout(publisher.publish(job(PIPELINE_FRAMES)), `${policy}: saturated publish`);
    jobs.push(pipePub);
    await untilTrue(() => acks.acked >= PIPELINE_FRAMES, `${policy}: saturated`, status);
    const cpuUsed = process.cpuUsage(cpuStart);
    loopDelay.disable();
    if (profile) console.log(`          CPU profile: ${await profile.stop()}`);
    const rssEnd = rss.sample();
    const cpuPipeline = cpu.percent();
    gc.stop();
    const framesPerS = PIPELINE_FRAMES / ((acks.lastAckMs - pipePub.startMs) / 1000);
    const p50 = acks.latency.percentile(50);
    const p99 = acks.latency.percentile(99);
    const cpuUsPerFrame = (cpuUsed.user + cpuUsed.system) / PIPELINE_FRAMES;
    console.log(`${policy.padEnd(8)}: ${round(framesPerS, 0)} frames/s, ${round(framesPerS * CHANNELS_PER_FRAME, 0)} values/s, ratio to bare ${round((framesPerS * CHANNELS_PER_FRAME) / bareValuesPerS, 3)}; latency p50 ${p50} ms p99 ${p99} ms (saturated: includes the backlog)`);
    const loopDelayMs = { p99: round(loopDelay.percentile(99) / 1e6, 0), max: round(loopDelay.max / 1e6, 0) };
    console.log(`          processor CPU ${round(cpuUsPerFrame, 1)} us per scan; event loop delay p99 ${loopDelayMs.p99} ms, max ${loopDelayMs.max} ms; rss start ${round(rssStart)} MB, middle ${round(rssMid)} MB, end ${round(rssEnd)} MB (boot ${round(rssBoot)} MB)`);
    console.log(`          CPU, % of one core (2 on this machine): strainward ${cpuPipeline.self}, VictoriaMetrics ${cpuPipeline.victoriametrics}, Mosquitto ${cpuPipeline.mosquitto}, publisher ${cpuPipeline.publisher}; garbage collection ${round(gc.ms, 0)} ms in ${gc.count} pauses (${round(gc.ms / PIPELINE_FRAMES * 1000, 1)} us per scan)`);

    // Steady ~10,000 values/s.
    const heapAfterSaturation = liveHeapMb();
    acks.reset(STEADY_FRAMES);
    const rssSteadyStart = rss.sample();
    const steadyPub = await withTimeout(publisher.publish(job(STEADY_FRAMES, STEADY_FRAMES_PER_S)), `${policy}: steady publish`, (STEADY_S + 30) * 1000);
    jobs.push(steadyPub);
    await untilTrue(() => acks.acked >= STEADY_FRAMES, `${policy}: steady`, status);
    const rssSteadyEnd = rss.sample();
    const heapSteadyEnd = liveHeapMb();
    const steadyValuesPerS = (STEADY_FRAMES * CHANNELS_PER_FRAME) / ((steadyPub.endMs - steadyPub.startMs) / 1000);
    const steadyP50 = acks.latency.percentile(50);
    const steadyP99 = acks.latency.percentile(99);
    console.log(`          steady ${round(steadyValuesPerS, 0)} values/s offered (publisher behind schedule at most ${steadyPub.maxBehindSchedule} scans); latency p50 ${steadyP50} ms p99 ${steadyP99} ms max ${acks.latency.percentile(100)} ms, of which logger to pipeline process p50 ${acks.arrival.percentile(50)} ms p99 ${acks.arrival.percentile(99)} ms`);
    console.log(`          live heap after a full collection: before the saturated run ${round(heapStart)} MB, after it ${round(heapAfterSaturation)} MB, after the steady run ${round(heapSteadyEnd)} MB`);
    liveStopped = true;
    await live.stop();

    const frames = jobs.reduce((n, j) => n + j.published, 0);
    const db = live.status().database as { writtenPoints: number; spooledPoints: number; refusedPoints: number };
    const decode = live.status().decode as { accepted: number; rejected: number };
    const storage = live.status().storage as StorageCounts;
    const expectedPoints = policy === 'full' ? frames * POINTS_PER_FRAME : storage.summaryLines + storage.rawSummaryLines + storage.windowResults + storage.lateResults;
    console.log(`          database: ${db.writtenPoints} points written (expected ${expectedPoints}), spooled ${db.spooledPoints}, refused ${db.refusedPoints}; decoded ${decode.accepted} of ${frames}, rejected ${decode.rejected}; storage ${JSON.stringify(storage)}; log events ${JSON.stringify(Object.fromEntries(events))}`);
    if (db.writtenPoints !== expectedPoints || decode.rejected !== 0 || decode.accepted !== frames) throw new Error(`${policy}: the pipeline did not write every point`);
    if (policy === 'summary' && (storage.summaryLines === 0 || storage.lateResults !== 0)) throw new Error('summary: no summary written, or results taken as late');
    return {
      framesPerS, p50, p99, cpuUsPerFrame, cpuPipeline, loopDelayMs, gcMs: gc.ms, steadyValuesPerS, steadyP50, steadyP99, frames, storage,
      rssStart, rssMid, rssEnd, rssSteadyStart, rssSteadyEnd, heapStart, heapAfterSaturation, heapSteadyEnd, databasePoints: db.writtenPoints,
    };
  };

  const full = await runPolicy('full', structure);
  const summaryStructure = benchStructure(BENCH_SUMMARY_STORAGE);
  const summary = await runPolicy('summary', summaryStructure);
  const peakRss = rss.peak_mb;
  rss.stop();
  // Phase 4 (after the live jobs have stopped, their memory figures taken): the database alone, full layout, same sink settings.
  const dbSettings = parseRuntimeConfig({
    schema_version: 1, structure: 'unused', mqtt: { url: broker.url, client_id: 'unused' },
    database: { url: vm.url, org: 'bench', bucket: 'bench', spool: { dir: join(dir, 'spool-alone') }, ...overrides('SW_BENCH_DATABASE') },
  }, 'bench').database!;
  const alone = await measureDatabaseAlone(structure, dbSettings, join(dir, 'spool-alone'), BENCH_LOGGER, bodies, PIPELINE_FRAMES, Date.now() - 3_600_000, { victoriametrics: vm.pid });
  console.log(`database alone: ${round(alone.frames_per_s, 0)} frames/s (${alone.values_per_frame} values, ${alone.bytes_per_frame} bytes of line protocol per scan, encoded beforehand); the full policy reached ${round(full.framesPerS / alone.frames_per_s, 3)} of it`);
  console.log(`          CPU, % of one core: the sink ${alone.cpu_pct.self}, VictoriaMetrics ${alone.cpu_pct.victoriametrics}`);

  // The server answers 204 before the samples are searchable: read back until all are there (up to 3 s).
  let seen = new Set<number>();
  for (let attempt = 0; attempt < 7 && seen.size < full.frames; attempt++) {
    if (attempt > 0) await new Promise((r) => setTimeout(r, 500));
    await vm.forceFlush();
    seen = new Set((await vm.exportSeries(`sw_raw_seq{logger="${BENCH_LOGGER}",run=""}`)).flatMap((x) => x.values));
  }
  const fullSeqFrom = WARM_FRAMES + BARE_FRAMES;
  const missing = [...Array(fullSeqFrom + full.frames).keys()].filter((k) => k >= fullSeqFrom && !seen.has(k));
  console.log(`database: ${seen.size} of ${full.frames} raw scans of the full policy read back from the server${missing.length ? `; missing seq ${missing.slice(0, 12).join(', ')}${missing.length > 12 ? ' ...' : ''}` : ''}`);

  const valuesPerS = full.framesPerS * CHANNELS_PER_FRAME;
  const summaryValuesPerS = summary.framesPerS * CHANNELS_PER_FRAME;
  return {
    policies: 'full,summary', summary_policy: `summary ${BENCH_SUMMARY_STORAGE.default.interval_s} s, raw summary, event windows ${BENCH_SUMMARY_STORAGE.event_windows.before_s}+${BENCH_SUMMARY_STORAGE.event_windows.after_s} s`,
    ratio_summary_to_bare: round(summaryValuesPerS / bareValuesPerS, 3), ratio_full_to_db_alone: round(full.framesPerS / alone.frames_per_s, 3),
    steady_p99_ms: summary.steadyP99, saturated_p99_ms: full.p99, cpu_us_per_frame: round(full.cpuUsPerFrame, 1),
    summary_frames_per_s: round(summary.framesPerS, 0), summary_values_per_s: round(summaryValuesPerS, 0), summary_saturated_p99_ms: summary.p99,
    summary_steady_p50_ms: summary.steadyP50, summary_cpu_us_per_frame: round(summary.cpuUsPerFrame, 1), summary_database_points: summary.databasePoints,
    summary_checkpoints: summary.storage.checkpoints, summary_ring_bytes: summary.storage.ringBytes,
    full_steady_p50_ms: full.steadyP50, full_steady_p99_ms: full.steadyP99,
    frames_per_s: round(full.framesPerS, 0), values_per_s: round(valuesPerS, 0), bare_values_per_s: round(bareValuesPerS, 0),
    ratio: round(valuesPerS / bareValuesPerS, 3), p50_ms: full.p50, p99_ms: full.p99, peak_rss_mb: round(peakRss),
    full_loop_delay_p99_ms: full.loopDelayMs.p99, full_loop_delay_max_ms: full.loopDelayMs.max,
    cpu_pct_strainward: full.cpuPipeline.self, gc_us_per_frame: round(full.gcMs / PIPELINE_FRAMES * 1000, 1), cpu_pct_database: full.cpuPipeline.victoriametrics, cpu_pct_broker: full.cpuPipeline.mosquitto,
    db_alone_frames_per_s: round(alone.frames_per_s, 0), ratio_to_db_alone: round(full.framesPerS / alone.frames_per_s, 3),
    db_alone_ratio_to_bare: round((alone.frames_per_s * CHANNELS_PER_FRAME) / bareValuesPerS, 3),
    steady_values_per_s: round(summary.steadyValuesPerS, 0), steady_p50_ms: summary.steadyP50,
    rss_start_mb: round(full.rssStart), rss_mid_mb: round(full.rssMid), rss_end_mb: round(full.rssEnd),
    steady_rss_start_mb: round(full.rssSteadyStart), steady_rss_end_mb: round(full.rssSteadyEnd),
    heap_start_mb: round(full.heapStart), heap_after_saturation_mb: round(full.heapAfterSaturation), heap_after_steady_mb: round(full.heapSteadyEnd),
    summary_heap_after_steady_mb: round(summary.heapSteadyEnd),
    frames: PIPELINE_FRAMES, channels_per_frame: CHANNELS_PER_FRAME,
    // The machine is shared: its load says how far the figures can be compared with another run's.
    load_avg_1m_start: round(loadStart, 2), load_avg_1m_end: round(loadavg()[0], 2),
  };
}

interface PolicyRun {
  framesPerS: number; p50: number; p99: number; cpuUsPerFrame: number; cpuPipeline: Record<string, number>; gcMs: number;
  /** The event loop's delay over the saturated run (ms): how long the database's answers could wait. */
  loopDelayMs: { p99: number; max: number };
  steadyValuesPerS: number; steadyP50: number; steadyP99: number; frames: number; storage: StorageCounts; databasePoints: number;
  rssStart: number; rssMid: number; rssEnd: number; rssSteadyStart: number; rssSteadyEnd: number;
  heapStart: number; heapAfterSaturation: number; heapSteadyEnd: number;
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
