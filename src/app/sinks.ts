import { dirname, resolve } from 'node:path';
import { mkdir } from 'node:fs/promises';
import { openInfluxSink, type InfluxSink } from '../adapters/influx/influx-sink.js';
import { LineFileSink } from '../adapters/lineproto/file-sink.js';
import { loadToken } from '../adapters/secret.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';
import type { PointSink } from '../model/point.js';
import type { SpoolStatus } from '../adapters/spool/spool.js';

/** What the live job hears of its spool: the fill passing its high-water mark, appends failing or working again. */
export interface SpoolEvents {
  highWater?: (status: SpoolStatus) => void;
  writable?: (failure: string | null, status: SpoolStatus) => void;
}

/** The point sink a runtime configuration asks for: the database (with its spool) or line-protocol files. */
export async function openPointSink(
  rc: RuntimeConfig, baseDir: string, now: () => number,
  spoolEvents: SpoolEvents = {},
): Promise<{ sink: PointSink; influx: InfluxSink | null; lineFiles: LineFileSink | null }> {
  if (rc.database) {
    const db = rc.database;
    const token = await loadToken({ env: db.token_env, file: db.token_file ? resolve(baseDir, db.token_file) : undefined });
    const influx = await openInfluxSink({
      url: db.url, org: db.org, bucket: db.bucket, token, timeout_ms: db.timeout_ms,
      gzipThreshold_bytes: gzipThreshold(db.gzip, db.gzip_threshold_bytes, db.url), batchSize: db.batch_size, flushInterval_ms: db.flush_interval_ms, maxInFlight: db.max_in_flight,
      maxRetries: db.max_retries, minRetryDelay_ms: db.min_retry_delay_ms, maxRetryDelay_ms: db.max_retry_delay_ms,
      now,
      spool: {
        dir: resolve(baseDir, db.spool.dir), limitBytes: db.spool.limit_bytes, policy: db.spool.policy,
        highWaterRatio: db.spool.high_water_ratio, onHighWater: spoolEvents.highWater, onWritable: spoolEvents.writable,
      },
    });
    return { sink: influx, influx, lineFiles: null };
  }
  const dir = resolve(baseDir, rc.line_protocol.dir);
  await mkdir(dir, { recursive: true });
  const lineFiles = new LineFileSink({
    dir, prefix: 'strainward', maxFileBytes: rc.line_protocol.max_file_bytes, maxFileAge_ms: rc.line_protocol.max_file_age_s * 1000, now,
  });
  return { sink: lineFiles, influx: null, lineFiles };
}

/** The gzip threshold the client gets: `never` and `auto` on a loopback database mean no compression. */
export function gzipThreshold(mode: 'auto' | 'always' | 'never', thresholdBytes: number, url: string): number {
  if (mode === 'never' || (mode === 'auto' && isLoopback(url))) return Number.MAX_SAFE_INTEGER;
  return thresholdBytes;
}

function isLoopback(url: string): boolean {
  const host = new URL(url).hostname.replace(/^\[|\]$/g, '');
  return host === 'localhost' || host === '::1' || /^127\.\d+\.\d+\.\d+$/.test(host);
}

export async function ensureParent(path: string): Promise<string> {
  await mkdir(dirname(path), { recursive: true });
  return path;
}
