import { asyncScheduler, Observable, type OperatorFunction, type SchedulerLike, type Subscription } from 'rxjs';
import type { LineBlock, LineWriter } from '../model/point.js';
import { frameLineEncoder, type FrameLineOptions } from './frame-lines.js';
import type { FrameOutput } from './process-frames.js';

/** A frame being written: what is kept of it once encoded. */
interface Written<M> {
  message: M;
  /** Null for a block of the storage stage (summaries, a window): no one frame's. */
  loggerId: string | null;
  timeMs: number;
  results: number;
}

interface Queued<M> {
  written: Written<M>;
  block: LineBlock;
}

/** What the write stage emits for each frame once its write is over. */
export interface WriteOutcome<M> {
  message: M;
  /** The frame's logger; null for a block of the storage stage (summaries, a window). */
  loggerId: string | null;
  /** The logger's timestamp of the frame, epoch ms. */
  timeMs: number;
  /** Group results the frame carried (written with it). */
  results: number;
  /** False when the last attempt failed: the message was left for the broker to deliver again. */
  acknowledged: boolean;
}

/** Anything that can be acknowledged once its results are safe. */
export interface Acknowledgeable {
  ack(): void;
  /** Called instead of `ack` when the write is given up (after the last attempt, or at `until`). */
  nack?(): void;
}

/** Lines already encoded (by the storage stage), written and acknowledged like a frame's. */
export interface EncodedBlock<M> {
  kind: 'encoded';
  block: LineBlock;
  message: M;
  timeMs: number;
  /** The frame's logger and its results when the block is one frame's lines (absent: summaries, a window). */
  loggerId?: string;
  results?: number;
}

export interface WriteRetry {
  /** Attempts per frame, the first included; Infinity = until the write succeeds. */
  maxAttempts: number;
  /** Delay before the second attempt, ms; doubles per attempt up to maxDelayMs. */
  initialDelayMs: number;
  maxDelayMs: number;
  scheduler?: SchedulerLike;
  /** Once this emits (a replaying source: late subscribers see it too), waiting retries give up. */
  until?: Observable<unknown>;
}

/** Live default: keep trying, so a spool that was full and has drained again lets the stream go on by itself. */
export const RETRY_FOREVER: WriteRetry = { maxAttempts: Number.POSITIVE_INFINITY, initialDelayMs: 200, maxDelayMs: 10_000 };
export const NO_RETRY: WriteRetry = { maxAttempts: 1, initialDelayMs: 0, maxDelayMs: 0 };

/**
 * Writes each processed frame's lines and acknowledges its message only after the sink says they
 * are durable (database or spool), so a crash in between makes the broker redeliver, not lose.
 * Up to `concurrency` frames are in flight, which lets the sink batch them; more wait in arrival
 * order. A failed write (spool full under the `block` policy) is reported and tried again with
 * backoff; the message stays unacknowledged meanwhile, and the connection's back-pressure holds
 * the broker back. After the last attempt the frame passes on unacknowledged (the broker
 * redelivers it after a reconnect); once `until` emits, a frame waiting to retry is dropped
 * unacknowledged and emits nothing. A block of no lines (a frame whose results all went into
 * summaries) is acknowledged and emitted at once, without the sink: every frame has its outcome.
 * Ticks and `received` outputs are not written and emit nothing.
 * Outcomes leave as writes complete.
 *
 * Written as one operator rather than an inner observable per frame: at full rate the per-frame
 * subscriptions of a mergeMap/retry chain were a tenth of the pipeline's time. Once encoded, a
 * frame's results are let go (only the message waits for the write): keeping them alive until the
 * database answered cost 4-5 us of garbage collection per 32-channel scan.
 */
export function writeAndAck<M extends Acknowledgeable>(
  sink: LineWriter, options: FrameLineOptions = {}, concurrency = 2048,
  onWriteError: (err: unknown, message: M) => void = () => {}, retryPolicy: WriteRetry = NO_RETRY,
): OperatorFunction<FrameOutput<M> | EncodedBlock<M>, WriteOutcome<M>> {
  const scheduler = retryPolicy.scheduler ?? asyncScheduler;
  return (source) => new Observable<WriteOutcome<M>>((subscriber) => {
    // One encoder per subscription: it keeps the prepared names of the series it has seen.
    const encode = frameLineEncoder(options);
    // Frames beyond `concurrency`, encoded, oldest first; `head` walks it, so taking one is O(1) however long it grows (replay).
    let waiting: Array<Queued<M> | undefined> = [];
    let head = 0;
    const retries = new Map<Subscription, Written<M>>();
    let inFlight = 0;
    let sourceDone = false;
    let givenUp = false;

    const finishIfDone = () => {
      if (sourceDone && inFlight === 0 && head === waiting.length) subscriber.complete();
    };
    const attempt = (w: Written<M>, block: LineBlock, n: number): void => {
      let written: Promise<void>;
      try {
        written = sink.writeLines(block);
      } catch (err) {
        written = Promise.reject(err);
      }
      written.then(() => {
        if (subscriber.closed) return;
        w.message.ack();
        settle(w, true);
      }, (err: unknown) => {
        if (subscriber.closed) return;
        onWriteError(err, w.message);
        if (n >= retryPolicy.maxAttempts || givenUp) return settle(w, false, givenUp);
        const delay = Math.min(retryPolicy.initialDelayMs * 2 ** (n - 1), retryPolicy.maxDelayMs);
        const retry: Subscription = scheduler.schedule(() => {
          retries.delete(retry);
          attempt(w, block, n + 1);
        }, delay);
        retries.set(retry, w); // it keeps its place among the `concurrency` until it is over
      }).catch((err: unknown) => subscriber.error(err)); // a throwing ack() or error callback ends the stream, as in any operator
    };
    /** A frame's write is over; a frame given up at `until` emits nothing. */
    const settle = (w: Written<M>, acknowledged: boolean, dropped = false) => {
      inFlight--;
      if (!acknowledged) w.message.nack?.();
      if (!dropped) subscriber.next({ message: w.message, loggerId: w.loggerId, timeMs: w.timeMs, results: w.results, acknowledged });
      startWaiting();
      finishIfDone();
    };
    const start = (q: Queued<M>) => {
      inFlight++;
      attempt(q.written, q.block, 1);
    };
    const startWaiting = () => {
      while (head < waiting.length && inFlight < concurrency) {
        const next = waiting[head]!;
        waiting[head++] = undefined; // started: the queue lets go of it
        start(next);
      }
      if (head > 1024 && head * 2 > waiting.length) {
        waiting = waiting.slice(head);
        head = 0;
      }
    };

    const stopRetries = retryPolicy.until?.subscribe(() => {
      givenUp = true;
      for (const [r, w] of retries) { r.unsubscribe(); w.message.nack?.(); }
      const dropped = retries.size;
      retries.clear();
      inFlight -= dropped;
      startWaiting();
      finishIfDone();
    });
    const upstream = source.subscribe({
      next: (p) => {
        if (p.kind !== 'frame' && p.kind !== 'encoded') return;
        // Encoded at once, and only the message kept: the results are let go here.
        const q: Queued<M> = p.kind === 'encoded' ? { written: { message: p.message, loggerId: p.loggerId ?? null, timeMs: p.timeMs, results: p.results ?? 0 }, block: p.block }
          : { written: { message: p.message, loggerId: p.frame.loggerId, timeMs: p.frame.timeMs, results: p.results.length }, block: encode(p) };
        // Nothing to write (a frame folded into summaries): durable as it is, acknowledged and reported at once.
        if (q.block.lines === 0) {
          q.written.message.ack();
          subscriber.next({ message: q.written.message, loggerId: q.written.loggerId, timeMs: q.written.timeMs, results: q.written.results, acknowledged: true });
          return;
        }
        if (inFlight < concurrency && head === waiting.length) start(q);
        else waiting.push(q);
      },
      error: (err) => subscriber.error(err),
      complete: () => {
        sourceDone = true;
        finishIfDone();
      },
    });
    return () => {
      upstream.unsubscribe();
      stopRetries?.unsubscribe();
      for (const r of retries.keys()) r.unsubscribe();
    };
  });
}
