/**
 * bench:overload - the live job offered more than it can take. Real Mosquitto (unlimited queue,
 * persistence off) and VictoriaMetrics on free loopback ports, `startLive` in this process, a
 * child process publishing the 32-channel bench logger (bench/support/bench-structure.ts).
 * 1. baseline: 10,000 scans as fast as the pipeline acknowledges them: the sustained rate S;
 * 2. 2x S offered for 20 s, then the time until every scan is acknowledged (recovery);
 * 3. 5x S offered for 20 s, the same.
 * Throughout: this process's RSS (sampled every 50 ms) and the live heap after full collections
 * (--expose-gc), the held acknowledgements against the window (`mqtt.max_held_acks`, which is
 * also the broker's in-flight limit); afterwards every seq is looked for in `sw_raw` (lost =
 * published and not stored, per phase). The pipeline cannot go faster than S: what an overload
 * must show is bounded memory, nothing lost, and the backlog worked off. Last line: one JSON
 * object, a `rates` entry per overload factor (peak_rss_mb, peak_held, window, lost, the ratio
 * of its peak RSS to the RSS at rest before it).
 * Environment: SW_OVERLOAD_S (seconds per overload phase, default 20).
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startLive } from '../src/app/live.js';
import { parseRuntimeConfig } from '../src/config/load-runtime.js';
import { startPersistentBroker } from '../scripts/faults/broker.js';
import { freePort, startVictoriaMetrics } from '../test/support/servers.js';
import { AckObserver } from './support/ack-observer.js';
import { BENCH_LOGGER, CHANNELS_PER_FRAME, benchStructure, scanValueBodies } from './support/bench-structure.js';
import { liveHeapMb, RssSampler, round } from './support/measure.js';
import { startPublisher, type PublishJob } from './support/publisher.js';

const BASELINE_FRAMES = 10_000;
const PHASE_S = process.env.SW_OVERLOAD_S ? Number(process.env.SW_OVERLOAD_S) : 20;
const TOPIC = `strainward/brannock-mere/${BENCH_LOGGER}/scan`;
const MAX_HELD_ACKS = 4096;

const cleanups: Array<() => Promise<unknown>> = [];
async function cleanUp(): Promise<void> {
  while (cleanups.length > 0) await cleanups.pop()!().catch((e: unknown) => console.error('cleanup:', e));
}

async function until(cond: () => boolean, what: string, timeoutMs: number): Promise<number> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeoutMs) throw new Error(`${what}: not done after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 10));
  }
  return Date.now() - t0;
}

async function main(): Promise<Record<string, unknown>> {
  const rss = new RssSampler(50);
  cleanups.push(async () => rss.stop());
  const dir = await mkdtemp(join(tmpdir(), 'sw-bench-overload-'));
  cleanups.push(() => rm(dir, { recursive: true, force: true }));
  const broker = await startPersistentBroker(dir, await freePort(), MAX_HELD_ACKS);
  cleanups.push(() => broker.stop());
  const vm = await startVictoriaMetrics();
  cleanups.push(() => vm.stop());
  const structure = benchStructure();
  const bodies = scanValueBodies(structure, 256);
  const publisher = await startPublisher(broker.url);
  cleanups.push(() => publisher.stop());
  const rc = parseRuntimeConfig({
    schema_version: 1, structure: 'unused',
    mqtt: { url: broker.url, client_id: 'sw-bench-overload', max_held_acks: MAX_HELD_ACKS },
    database: { url: vm.url, org: 'bench', bucket: 'bench', spool: { dir: join(dir, 'spool') } },
    dead_letters: { file: join(dir, 'deadletters.ndjson') },
  }, 'bench');
  const live = await startLive({ runtime: rc, structure, baseDir: dir }, { now: Date.now, log: () => {} });
  let stopped = false;
  cleanups.push(async () => { if (!stopped) await live.stop(); });
  const acks = new AckObserver(live.connection);
  let seq = 0;
  const job = (count: number, rate_per_s = 0): PublishJob => {
    const j = { topic: TOPIC, count, window: 1000, rate_per_s, seqStart: seq, bodies };
    seq += count;
    return j;
  };
  let heldMax = 0;
  // Live heap (after a full collection, once per phase) the first time the window is full: what
  // the held messages really cost, where the V8 heap's size also holds garbage not yet collected.
  let liveHeapAtWindow = Number.NaN;
  let measureAtWindow = false;
  const heldTimer = setInterval(() => {
    const held = live.connection.stats().heldAcks;
    heldMax = Math.max(heldMax, held);
    if (measureAtWindow && held >= MAX_HELD_ACKS) {
      measureAtWindow = false;
      liveHeapAtWindow = liveHeapMb();
    }
  }, 20);
  cleanups.push(async () => clearInterval(heldTimer));

  // Baseline: the sustained rate.
  acks.reset(2000);
  await publisher.publish(job(2000));
  await until(() => acks.acked >= 2000, 'warm-up', 60_000);
  acks.reset(BASELINE_FRAMES);
  const rssBaseline = rss.sample();
  const heapBaseline = liveHeapMb();
  const basePub = await publisher.publish(job(BASELINE_FRAMES));
  await until(() => acks.acked >= BASELINE_FRAMES, 'baseline', 120_000);
  const sustained = BASELINE_FRAMES / ((acks.lastAckMs - basePub.startMs) / 1000);
  console.log(`baseline: ${round(sustained, 0)} scans/s sustained (${round(sustained * CHANNELS_PER_FRAME, 0)} values/s), rss ${round(rssBaseline)} MB, live heap ${round(heapBaseline)} MB`);

  const rates: Record<string, Record<string, number>> = {};
  const seqRanges: Record<string, [number, number]> = {};
  for (const factor of [2, 5]) {
    const count = Math.round(sustained * factor * PHASE_S);
    acks.reset(count);
    rss.resetPeaks();
    heldMax = 0;
    liveHeapAtWindow = Number.NaN;
    measureAtWindow = true;
    const statsBefore = live.connection.stats();
    const rssBefore = rss.sample();
    seqRanges[`${factor}x`] = [seq, seq + count];
    const pub = await publisher.publish(job(count, Math.round(sustained * factor)));
    const offered = pub.published / ((pub.endMs - pub.startMs) / 1000);
    const ackedAtEnd = acks.acked;
    const recoveryMs = await until(() => acks.acked >= count, `${factor}x recovery`, 600_000);
    const heap = liveHeapMb();
    const statsAfter = live.connection.stats();
    console.log(`${factor}x: offered ${round(offered, 0)} scans/s for ${round((pub.endMs - pub.startMs) / 1000)} s (${pub.published} scans; ${ackedAtEnd} acknowledged by then), `
      + `backlog worked off ${round(recoveryMs / 1000)} s later; peak rss ${round(rss.peak_mb)} MB (V8 heap ${round(rss.peak_heap_total_mb)} MB, outside it ${round(rss.peak_external_mb)} MB), live heap with the window full ${round(liveHeapAtWindow)} MB and after ${round(heap)} MB, held acknowledgements at most ${heldMax} (window ${MAX_HELD_ACKS}; ${statsAfter.overWindow - statsBefore.overWindow} taken beyond it, ${statsAfter.pauses - statsBefore.pauses} stops)`);
    rates[`${factor}x`] = {
      offered_per_s: round(offered, 0), offer_s: round((pub.endMs - pub.startMs) / 1000), published: pub.published,
      acked_during_offer: ackedAtEnd, recovery_s: round(recoveryMs / 1000),
      peak_rss_mb: round(rss.peak_mb), peak_heap_total_mb: round(rss.peak_heap_total_mb), peak_external_mb: round(rss.peak_external_mb), rss_before_mb: round(rssBefore), live_heap_at_window_mb: round(liveHeapAtWindow), heap_after_mb: round(heap),
      peak_held: heldMax, window: MAX_HELD_ACKS,
      over_window: statsAfter.overWindow - statsBefore.overWindow, pauses: statsAfter.pauses - statsBefore.pauses,
      ratio_peak_rss_to_baseline: round(rss.peak_mb / rssBaseline, 2),
    };
  }
  stopped = true;
  await live.stop();

  // Every published seq in the raw archive.
  let seen = new Set<number>();
  for (let attempt = 0; attempt < 10 && seen.size < seq; attempt++) {
    if (attempt > 0) await new Promise((r) => setTimeout(r, 500));
    await vm.forceFlush();
    seen = new Set((await vm.exportSeries(`sw_raw_seq{logger="${BENCH_LOGGER}"}`)).flatMap((x) => x.values));
  }
  const lostIn = (from: number, to: number) => { let n = 0; for (let k = from; k < to; k++) if (!seen.has(k)) n++; return n; };
  const lost = lostIn(0, seq);
  for (const [name, [from, to]] of Object.entries(seqRanges)) rates[name].lost = lostIn(from, to);
  console.log(`stored: ${seen.size} distinct scans of ${seq} published; lost ${lost}`);
  return {
    window: MAX_HELD_ACKS, sustained_per_s: round(sustained, 0), rss_baseline_mb: round(rssBaseline), heap_baseline_mb: round(heapBaseline),
    rates, published: seq, lost,
  };
}

try {
  const figures = await main();
  await cleanUp();
  console.log(JSON.stringify({ bench: 'overload', ...figures }));
} catch (err) {
  console.error(err);
  await cleanUp();
  console.log(JSON.stringify({ bench: 'overload', error: String(err instanceof Error ? err.message : err) }));
  process.exitCode = 1;
}
