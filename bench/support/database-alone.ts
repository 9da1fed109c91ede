/**
 * The database's own ceiling for the pipeline's layout: the same frames, computed and encoded
 * beforehand (untimed), written through the same database sink and settings as the live job,
 * then timed from the first write to the last durable one. No MQTT, no decoding, no mechanics in
 * the timed part: what this machine's time-series server takes when it shares the CPU with
 * nothing but the sink. The pipeline cannot beat this rate, whatever it does upstream.
 */
import { openInfluxSink } from '../../src/adapters/influx/influx-sink.js';
import { gzipThreshold } from '../../src/app/sinks.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import type { RuntimeConfig } from '../../src/config/runtime-schema.js';
import { lineBlockText, type LineBlock } from '../../src/model/point.js';
import { FrameProcessor } from '../../src/pipeline/frame-processor.js';
import { frameLineEncoder } from '../../src/pipeline/frame-lines.js';
import { CpuMeter } from './cpu-meter.js';

export interface DatabaseAloneRun {
  frames_per_s: number;
  values_per_frame: number;
  bytes_per_frame: number;
  /** CPU over the timed part, % of one core: `self` (the sink) and the processes in `watch`. */
  cpu_pct: Record<string, number>;
}

/** Encodes `count` scans of `logger` (values from `bodies`) with run tag `run`, then writes and times them. */
export async function measureDatabaseAlone(
  structure: CompiledStructure, db: NonNullable<RuntimeConfig['database']>, spoolDir: string,
  logger: string, bodies: readonly string[], count: number, startMs: number, watch: Readonly<Record<string, number>> = {},
): Promise<DatabaseAloneRun> {
  const processor = new FrameProcessor<null>(structure);
  const encode = frameLineEncoder({ extraTags: { run: 'database-alone' } });
  const blocks: LineBlock[] = [];
  for (let i = 0; i < count; i++) {
    const values = new Map(Object.entries(JSON.parse(bodies[i % bodies.length]) as Record<string, number | null>));
    const frame = { structureId: structure.structureId, loggerId: logger, timeMs: startMs + i, seq: i, values, arrivalMs: startMs + i };
    for (const p of processor.onFrame(frame, null, frame.arrivalMs)) blocks.push(encode(p));
  }
  const sink = await openInfluxSink({
    url: db.url, org: db.org, bucket: db.bucket, token: null, timeout_ms: db.timeout_ms,
    gzipThreshold_bytes: gzipThreshold(db.gzip, db.gzip_threshold_bytes, db.url), batchSize: db.batch_size,
    flushInterval_ms: db.flush_interval_ms, maxInFlight: db.max_in_flight, maxRetries: 0, minRetryDelay_ms: 100, maxRetryDelay_ms: 100,
    spool: { dir: spoolDir, limitBytes: db.spool.limit_bytes },
  });
  const cpu = new CpuMeter(watch);
  const t0 = performance.now();
  await Promise.all(blocks.map((b) => sink.writeLines(b)));
  const seconds = (performance.now() - t0) / 1000;
  const cpuPct = cpu.percent();
  const status = sink.status();
  await sink.close();
  if (status.writtenPoints !== blocks.reduce((n, b) => n + b.lines, 0)) throw new Error(`database alone: ${status.writtenPoints} lines written, spooled ${status.spooledPoints}`);
  const sample = lineBlockText(blocks[0]);
  const fields = sample.split('\n').reduce((n, line) => n + line.split(' ')[1].split(',').length, 0);
  return { frames_per_s: count / seconds, values_per_frame: fields, bytes_per_frame: Buffer.byteLength(sample) + 1, cpu_pct: cpuPct };
}
