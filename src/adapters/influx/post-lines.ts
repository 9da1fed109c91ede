/**
 * One HTTP write of line-protocol lines through `@influxdata/influxdb-client` (InfluxDB v2 write API,
 * precision ms), with the client's own batching and retry switched off.
 *
 * Why not the client's batching: its `flush()` rejects on a failed write but keeps the lines in a
 * background retry buffer that sends them again later. Lines we also put in the spool would then
 * arrive twice. So each call gets a fresh WriteApi sized to the call (no auto-flush, no interval
 * timer), and `writeFailed` returns a rejected promise, which makes the client hand the error back
 * at once without retrying or logging it. Retries and back-off are done by the sink.
 */
import { HttpError, InfluxDB } from '@influxdata/influxdb-client';
import { redact } from '../secret.js';

export interface InfluxTarget {
  /** Base URL, e.g. `http://127.0.0.1:8428` (VictoriaMetrics) or `http://127.0.0.1:8086`. */
  url: string;
  org: string;
  bucket: string;
  /** API token or null when the server needs none. Never logged; redacted from every error. */
  token: string | null;
  /** Socket timeout of one write request (ms). */
  timeout_ms: number;
  /** Bodies larger than this are gzipped (bytes). */
  gzipThreshold_bytes: number;
}

/** A write the database did not take. `message` is redacted; `retryable` is false for 400/413/422. */
export class DatabaseWriteError extends Error {
  constructor(message: string, readonly statusCode: number | null, readonly retryable: boolean) {
    super(message);
    this.name = 'DatabaseWriteError';
  }
}

/** Makes a function that writes lines in one request; it resolves on HTTP 204 and rejects with DatabaseWriteError. */
export function createLinePoster(target: InfluxTarget): (lines: readonly string[]) => Promise<void> {
  const client = new InfluxDB({ url: target.url, token: target.token ?? undefined, timeout: target.timeout_ms });
  return async (lines) => {
    if (lines.length === 0) return;
    const api = client.getWriteApi(target.org, target.bucket, 'ms', {
      batchSize: lines.length + 1,
      maxBatchBytes: Number.MAX_SAFE_INTEGER,
      flushInterval: 0,
      maxRetries: 0,
      gzipThreshold: target.gzipThreshold_bytes,
      writeFailed: (error: Error) => Promise.reject(error),
    });
    try {
      // One record holding every line gives the same request body; the client measures each
      // record's UTF-8 length character by character, which on thousands of short unflattened
      // strings showed up as ~5 % of bench:pipeline's profile. Joined, it is one flat scan.
      api.writeRecord(lines.join('\n'));
      await api.flush();
    } catch (err) {
      throw toDatabaseWriteError(err, target.token);
    } finally {
      api.dispose();
    }
  };
}

/** Builds a redacted DatabaseWriteError from whatever the client threw. */
export function toDatabaseWriteError(err: unknown, token: string | null): DatabaseWriteError {
  if (err instanceof HttpError) {
    const body = err.body ? `: ${err.body.slice(0, 300)}` : '';
    const refused = err.statusCode === 400 || err.statusCode === 413 || err.statusCode === 422;
    return new DatabaseWriteError(redact(`database write: HTTP ${err.statusCode}${body}`, token), err.statusCode, !refused);
  }
  const text = err instanceof Error ? `${err.name}: ${err.message}` : String(err);
  return new DatabaseWriteError(redact(`database write: ${text}`, token), null, true);
}
