/**
 * One HTTP write of line-protocol texts (each one or more lines) through `@influxdata/influxdb-client`'s
 * transport: the InfluxDB v2 write endpoint, precision ms, with the client's token header, timeout
 * and gzip.
 *
 * Why not the client's WriteApi: its `flush()` rejects on a failed write but keeps the lines in a
 * background retry buffer that sends them again later, so lines we also put in the spool would
 * arrive twice; and it measures every record's UTF-8 length character by character, which was 4 %
 * of the pipeline's time at full rate. Batching, retries and back-off are done by the sink.
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
export function createLinePoster(target: InfluxTarget): (texts: readonly string[]) => Promise<void> {
  const client = new InfluxDB({ url: target.url, token: target.token ?? undefined, timeout: target.timeout_ms });
  const path = `/api/v2/write?org=${encodeURIComponent(target.org)}&bucket=${encodeURIComponent(target.bucket)}&precision=ms`;
  const options = { method: 'POST', headers: { 'content-type': 'text/plain; charset=utf-8' }, gzipThreshold: target.gzipThreshold_bytes };
  return async (texts) => {
    if (texts.length === 0) return;
    try {
      await client.transport.request(path, texts.join('\n'), options);
    } catch (err) {
      throw toDatabaseWriteError(err, target.token);
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
