/**
 * PointSink writing to an InfluxDB-v2-compatible write API (InfluxDB, VictoriaMetrics), with a
 * local spool for outages.
 *
 * - Batching: points of many `write` calls collect until `batchSize` lines are pending or
 *   `flushInterval_ms` has passed; up to `maxInFlight` batches go out at once. Points carry their
 *   own timestamps, so batches in flight together may land in either order.
 * - Durability: each `write` resolves when all its points are written to the database or appended
 *   to the spool; it rejects with SpoolFullError when the spool refuses them (policy `block`).
 * - Outage: a batch is retried `maxRetries` times with back-off, then spooled. While the spool holds
 *   anything, new batches are appended behind it, and a drainer writes the spool out oldest segment
 *   first, so the database receives every point once, in write order.
 * - A batch the database refuses for its content (HTTP 400/413/422) would block the drain for ever:
 *   it is set aside in `<spool dir>/refused/` and counted in `refusedPoints`.
 * - The token is never logged; `lastError` and every error are redacted.
 */
import { joinLineBlocks, lineBlockOf, utf8Text, type LineBlock, type Point, type PointSink } from '../../model/point.js';
import { encodeLines } from '../lineproto/encode.js';
import { Spool, type SpoolOptions } from '../spool/spool.js';
import { cancellableSleep } from './backoff.js';
import { SpoolDrainer } from './drainer.js';
import type { InfluxSinkOptions, InfluxSinkStatus } from './influx-sink-types.js';
import { createLinePoster, DatabaseWriteError } from './post-lines.js';
import { setAsideRefused } from './refused-lines.js';
import { sendWithRetry } from './send-with-retry.js';

export type { InfluxSinkOptions, InfluxSinkStatus } from './influx-sink-types.js';

interface Pending extends LineBlock {
  lines: number;
  resolve: () => void;
  reject: (err: unknown) => void;
}

/** Database sink; see the module comment for the guarantees. */
export class InfluxSink implements PointSink {
  private pending: Pending[] = [];
  private pendingLines = 0;
  private inFlightLines = 0;
  private inFlightBatches = 0;
  private readonly maxInFlight: number;
  private flushDue = false;
  private timer: ReturnType<typeof setTimeout> | null = null;
  /** Waiting for nothing pending and nothing in flight (flush). */
  private idleWaiters: Array<() => void> = [];
  private closed = false;
  private readonly now: () => number;
  private readonly post: (body: readonly string[] | Uint8Array) => Promise<void>;
  private readonly drainer: SpoolDrainer;
  private readonly counters = { writtenPoints: 0, spooledPoints: 0, refusedPoints: 0, failedWrites: 0 };
  private readonly health: { dbReachable: boolean | null; lastError: string | null } = { dbReachable: null, lastError: null };

  constructor(private readonly opts: InfluxSinkOptions) {
    if (!(opts.batchSize >= 1)) throw new RangeError('batchSize must be >= 1');
    this.maxInFlight = opts.maxInFlight ?? 1;
    if (!(this.maxInFlight >= 1)) throw new RangeError('maxInFlight must be >= 1');
    this.now = opts.now ?? Date.now;
    this.post = createLinePoster(opts);
    this.drainer = new SpoolDrainer({
      spool: opts.spool,
      retry: opts,
      post: this.post,
      onWritten: (n) => this.noteWritten(n),
      onFailed: (err) => this.noteFailed(err),
      onRefused: (lines) => this.setAside(lines, lines.length),
    });
    if (!opts.spool.isEmpty()) this.drainer.kick();
  }

  write(points: readonly Point[]): Promise<void> {
    if (this.closed) return Promise.reject(new Error('influx sink: write after close'));
    const lines = encodeLines(points);
    return this.writeLines(lineBlockOf(lines.join('\n'), lines.length));
  }

  writeLines(block: LineBlock): Promise<void> {
    if (this.closed) return Promise.reject(new Error('influx sink: write after close'));
    if (block.lines === 0) return Promise.resolve();
    return new Promise<void>((resolve, reject) => {
      this.pending.push({ bytes: block.bytes, lines: block.lines, resolve, reject });
      this.pendingLines += block.lines;
      if (this.pendingLines >= this.opts.batchSize) this.startPump();
      else this.armTimer();
    });
  }

  /** Sends everything pending now (to the database or the spool) and waits for it. */
  async flush(): Promise<void> {
    this.flushDue = true;
    this.startPump();
    if (this.pending.length === 0 && this.inFlightBatches === 0) return;
    await new Promise<void>((resolve) => this.idleWaiters.push(resolve));
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
    while (this.pending.length > 0 || this.inFlightBatches > 0 || !this.opts.spool.isEmpty() || this.drainer.running) {
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
      spoolDiskFreeBytes: spool.diskFreeBytes,
      spoolWriteFailure: spool.writeFailure,
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

  /** Sends batches while there is room in flight and a batch is due (full, or the flush timer ran out). */
  private startPump(): void {
    while (this.inFlightBatches < this.maxInFlight && this.pending.length > 0 && (this.flushDue || this.pendingLines >= this.opts.batchSize)) {
      let taken = 0;
      let count = 0;
      while (taken < this.pending.length && count < this.opts.batchSize) count += this.pending[taken++].lines;
      // One splice per batch: shift() per entry is linear in the queue, which holds thousands of frames at full rate.
      const batch = this.pending.splice(0, taken);
      this.pendingLines -= count;
      this.inFlightLines += count;
      this.inFlightBatches++;
      // The counters are settled before the writers hear back, so status() agrees with them.
      const done = (err: unknown) => {
        this.inFlightLines -= count;
        this.inFlightBatches--;
        for (const p of batch) if (err === undefined) p.resolve(); else p.reject(err);
        this.startPump();
      };
      // One body per batch, the blocks' bytes joined: no string per frame, none per batch.
      this.deliver(joinLineBlocks(batch, false), count).then(() => done(undefined), (err: unknown) => done(err ?? new Error('database write failed')));
    }
    if (this.pending.length === 0) {
      this.flushDue = false;
      if (this.timer !== null) {
        clearTimeout(this.timer);
        this.timer = null;
      }
      if (this.inFlightBatches === 0) for (const wake of this.idleWaiters.splice(0)) wake();
    } else this.armTimer();
  }

  /** Database first when nothing is spooled; otherwise (or when it fails) behind the spool. */
  private async deliver(body: Uint8Array, lines: number): Promise<void> {
    if (this.opts.spool.isEmpty() && !this.drainer.running) {
      try {
        await sendWithRetry(() => this.post(body), this.opts, (err) => this.noteFailed(err));
        this.noteWritten(lines);
        return;
      } catch (err) {
        if (err instanceof DatabaseWriteError && !err.retryable) return this.setAside([utf8Text(body)], lines);
      }
    }
    // Only a batch the database did not take becomes text (the spool's unit).
    await this.opts.spool.append([utf8Text(body)], lines);
    this.counters.spooledPoints += lines;
    this.drainer.kick();
  }

  private async setAside(texts: readonly string[], lines: number): Promise<void> {
    await setAsideRefused(this.opts.spool.dir, texts, this.now());
    this.counters.refusedPoints += lines;
  }

  private noteWritten(n: number): void {
    this.counters.writtenPoints += n;
    this.health.dbReachable = true;
  }

  private noteFailed(err: DatabaseWriteError): void {
    this.counters.failedWrites++;
    this.health.dbReachable = false;
    this.health.lastError = err.message;
  }
}

/** Opens the spool described by `spool` (finding old segments) and builds the sink on it. */
export async function openInfluxSink(options: Omit<InfluxSinkOptions, 'spool'> & { spool: SpoolOptions }): Promise<InfluxSink> {
  const spool = await Spool.open(options.spool);
  return new InfluxSink({ ...options, spool });
}
