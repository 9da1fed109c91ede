/**
 * PointSink writing to an InfluxDB-v2-compatible write API (InfluxDB, VictoriaMetrics), with a
 * local spool for outages.
 *
 * - Batching: points of many `write` calls collect until `batchSize` lines are pending or
 *   `flushInterval_ms` has passed; batches go out one at a time, in order.
 * - Durability: each `write` resolves when all its points are written to the database or appended
 *   to the spool; it rejects with SpoolFullError when the spool refuses them (policy `block`).
 * - Outage: a batch is retried `maxRetries` times with back-off, then spooled. While the spool holds
 *   anything, new batches are appended behind it, and a drainer writes the spool out oldest segment
 *   first, so the database receives every point once, in write order.
 * - A batch the database refuses for its content (HTTP 400/413/422) would block the drain for ever:
 *   it is set aside in `<spool dir>/refused/` and counted in `refusedPoints`.
 * - The token is never logged; `lastError` and every error are redacted.
 */
import type { Point, PointSink } from '../../model/point.js';
import { encodeLines } from '../lineproto/encode.js';
import { Spool, type SpoolOptions } from '../spool/spool.js';
import { cancellableSleep } from './backoff.js';
import { SpoolDrainer } from './drainer.js';
import type { InfluxSinkOptions, InfluxSinkStatus } from './influx-sink-types.js';
import { createLinePoster, DatabaseWriteError } from './post-lines.js';
import { setAsideRefused } from './refused-lines.js';
import { sendWithRetry } from './send-with-retry.js';

export type { InfluxSinkOptions, InfluxSinkStatus } from './influx-sink-types.js';

interface Pending {
  lines: string[];
  resolve: () => void;
  reject: (err: unknown) => void;
}

/** Database sink; see the module comment for the guarantees. */
export class InfluxSink implements PointSink {
  private pending: Pending[] = [];
  private pendingLines = 0;
  private inFlightLines = 0;
  private flushDue = false;
  private timer: ReturnType<typeof setTimeout> | null = null;
  private pumping: Promise<void> | null = null;
  private closed = false;
  private readonly now: () => number;
  private readonly post: (lines: readonly string[]) => Promise<void>;
  private readonly drainer: SpoolDrainer;
  private readonly counters = { writtenPoints: 0, spooledPoints: 0, refusedPoints: 0 };
  private readonly health: { dbReachable: boolean | null; lastError: string | null } = { dbReachable: null, lastError: null };

  constructor(private readonly opts: InfluxSinkOptions) {
    if (!(opts.batchSize >= 1)) throw new RangeError('batchSize must be >= 1');
    this.now = opts.now ?? Date.now;
    this.post = createLinePoster(opts);
    this.drainer = new SpoolDrainer({
      spool: opts.spool,
      retry: opts,
      post: this.post,
      onWritten: (n) => this.noteWritten(n),
      onFailed: (err) => this.noteFailed(err),
      onRefused: (lines) => this.setAside(lines),
    });
    if (!opts.spool.isEmpty()) this.drainer.kick();
  }

  write(points: readonly Point[]): Promise<void> {
    if (this.closed) return Promise.reject(new Error('influx sink: write after close'));
    const lines = encodeLines(points);
    if (lines.length === 0) return Promise.resolve();
    return new Promise<void>((resolve, reject) => {
      this.pending.push({ lines, resolve, reject });
      this.pendingLines += lines.length;
      if (this.pendingLines >= this.opts.batchSize) this.startPump();
      else this.armTimer();
    });
  }

  /** Sends everything pending now (to the database or the spool) and waits for it. */
  async flush(): Promise<void> {
    this.flushDue = true;
    this.startPump();
    while (this.pumping) await this.pumping;
  }

  /** Flushes, stops the drainer after its current chunk and closes the spool (which keeps its segments). */
  async close(): Promise<void> {
    this.closed = true;
    await this.flush();
    await this.drainer.stop();
    await this.opts.spool.close();
  }

  /** Resolves once the spool is empty and nothing is pending (tests and orderly shutdown). */
  async drained(pollMs = 20): Promise<void> {
    while (this.pending.length > 0 || this.pumping || !this.opts.spool.isEmpty() || this.drainer.running) {
      await cancellableSleep(pollMs).done;
    }
  }

  status(): InfluxSinkStatus {
    const spool = this.opts.spool.status();
    return {
      queuedPoints: this.pendingLines + this.inFlightLines,
      spoolBytes: spool.bytes,
      spoolLimitBytes: spool.limitBytes,
      spoolFillRatio: spool.fillRatio,
      dbReachable: this.health.dbReachable,
      ...this.counters,
      droppedPoints: spool.droppedPoints,
      lastError: this.health.lastError,
    };
  }

  private armTimer(): void {
    if (this.timer !== null) return;
    this.timer = setTimeout(() => {
      this.timer = null;
      this.flushDue = true;
      this.startPump();
    }, this.opts.flushInterval_ms);
  }

  private startPump(): void {
    if (this.pumping) return;
    this.pumping = this.pump().finally(() => {
      this.pumping = null;
      if (this.pending.length > 0) this.armTimer();
    });
  }

  private async pump(): Promise<void> {
    while (this.pending.length > 0 && (this.flushDue || this.pendingLines >= this.opts.batchSize)) {
      const batch: Pending[] = [];
      let count = 0;
      while (this.pending.length > 0 && count < this.opts.batchSize) {
        const next = this.pending.shift()!;
        batch.push(next);
        count += next.lines.length;
      }
      this.pendingLines -= count;
      if (this.pending.length === 0) this.flushDue = false;
      this.inFlightLines = count;
      try {
        await this.deliver(batch.flatMap((p) => p.lines));
        for (const p of batch) p.resolve();
      } catch (err) {
        for (const p of batch) p.reject(err);
      } finally {
        this.inFlightLines = 0;
      }
    }
    if (this.timer !== null && this.pending.length === 0) {
      clearTimeout(this.timer);
      this.timer = null;
    }
  }

  /** Database first when nothing is spooled; otherwise (or when it fails) behind the spool. */
  private async deliver(lines: string[]): Promise<void> {
    if (this.opts.spool.isEmpty() && !this.drainer.running) {
      try {
        await sendWithRetry(() => this.post(lines), this.opts, (err) => this.noteFailed(err));
        this.noteWritten(lines.length);
        return;
      } catch (err) {
        if (err instanceof DatabaseWriteError && !err.retryable) return this.setAside(lines);
      }
    }
    await this.opts.spool.append(lines);
    this.counters.spooledPoints += lines.length;
    this.drainer.kick();
  }

  private async setAside(lines: readonly string[]): Promise<void> {
    await setAsideRefused(this.opts.spool.dir, lines, this.now());
    this.counters.refusedPoints += lines.length;
  }

  private noteWritten(n: number): void {
    this.counters.writtenPoints += n;
    this.health.dbReachable = true;
  }

  private noteFailed(err: DatabaseWriteError): void {
    this.health.dbReachable = false;
    this.health.lastError = err.message;
  }
}

/** Opens the spool described by `spool` (finding old segments) and builds the sink on it. */
export async function openInfluxSink(options: Omit<InfluxSinkOptions, 'spool'> & { spool: SpoolOptions }): Promise<InfluxSink> {
  const spool = await Spool.open(options.spool);
  return new InfluxSink({ ...options, spool });
}
