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

/**
 * Makes a function that writes lines in one request: texts (joined by newlines) or the bytes of
 * lines already joined (the sink's batches: no text made of them at all). It resolves on HTTP 2xx
 * and rejects with DatabaseWriteError.
 *
 * Bytes go through the transport's `send`, whose message builder copies its body with
 * Buffer.from: for bytes that is the copy alone, where a text meant decoding the batch into a
 * string and encoding it back (6 % of the processor's time at full rate). `request` would turn
 * anything but a string into JSON, so it takes texts only. test/integration/sink-influx.test.ts
 * reads UTF-8 tags back from a real server through this path.
 */
export function createLinePoster(target: InfluxTarget): (body: readonly string[] | Uint8Array) => Promise<void> {
  const client = new InfluxDB({ url: target.url, token: target.token ?? undefined, timeout: target.timeout_ms });
  const path = `/api/v2/write?org=${encodeURIComponent(target.org)}&bucket=${encodeURIComponent(target.bucket)}&precision=ms`;
  const options = { method: 'POST', headers: { 'content-type': 'text/plain; charset=utf-8' }, gzipThreshold: target.gzipThreshold_bytes };
  const sendBytes = (bytes: Uint8Array) => new Promise<void>((resolve, reject) => {
    client.transport.send(path, bytes as unknown as string, options, { error: reject, complete: () => resolve() });
  });
  return async (body) => {
    const bytes = body instanceof Uint8Array;
    if (bytes ? body.byteLength === 0 : body.length === 0) return;
    try {
      if (bytes) await sendBytes(body);
      else await client.transport.request(path, body.join('\n'), options);
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
