import { asyncScheduler, Observable, type OperatorFunction, type SchedulerLike, type Subscription } from 'rxjs';
import type { LineWriter } from '../model/point.js';
import { frameLineEncoder, type FrameLineOptions } from './frame-lines.js';
import type { ProcessedFrame } from './frame-processor.js';
import type { FrameOutput } from './process-frames.js';

type FrameItem<M> = Extract<FrameOutput<M>, { kind: 'frame' }>;

/** Anything that can be acknowledged once its results are safe. */
export interface Acknowledgeable {
  ack(): void;
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
 * unacknowledged. Other outputs pass through at once. Frames leave as their writes complete.
 *
 * Written as one operator rather than an inner observable per frame: at full rate the per-frame
 * subscriptions of a mergeMap/retry chain were a tenth of the pipeline's time.
 */
export function writeAndAck<M extends Acknowledgeable>(
  sink: LineWriter, options: FrameLineOptions = {}, concurrency = 2048,
  onWriteError: (err: unknown, p: ProcessedFrame<M>) => void = () => {}, retryPolicy: WriteRetry = NO_RETRY,
): OperatorFunction<FrameOutput<M>, FrameOutput<M>> {
  const scheduler = retryPolicy.scheduler ?? asyncScheduler;
  return (source) => new Observable<FrameOutput<M>>((subscriber) => {
    // One encoder per subscription: it keeps the prepared names of the series it has seen.
    const encode = frameLineEncoder(options);
    // Frames beyond `concurrency`, oldest first; `head` walks it, so taking one is O(1) however long it grows (replay).
    let waiting: Array<FrameItem<M> | undefined> = [];
    let head = 0;
    const retries = new Set<Subscription>();
    let inFlight = 0;
    let sourceDone = false;
    let givenUp = false;

    const finishIfDone = () => {
      if (sourceDone && inFlight === 0 && head === waiting.length) subscriber.complete();
    };
    const attempt = (p: FrameItem<M>, block: ReturnType<typeof encode>, n: number): void => {
      let written: Promise<void>;
      try {
        written = sink.writeLines(block);
      } catch (err) {
        written = Promise.reject(err);
      }
      written.then(() => {
        if (subscriber.closed) return;
        p.message.ack();
        settle(p, true);
      }, (err: unknown) => {
        if (subscriber.closed) return;
        onWriteError(err, p);
        if (n >= retryPolicy.maxAttempts || givenUp) return settle(p, !givenUp);
        const delay = Math.min(retryPolicy.initialDelayMs * 2 ** (n - 1), retryPolicy.maxDelayMs);
        const retry: Subscription = scheduler.schedule(() => {
          retries.delete(retry);
          attempt(p, block, n + 1);
        }, delay);
        retries.add(retry); // it keeps its place among the `concurrency` until it is over
      }).catch((err: unknown) => subscriber.error(err)); // a throwing ack() or error callback ends the stream, as in any operator
    };
    /** A frame's write is over: `emit` false when it was given up (not acknowledged, not passed on). */
    const settle = (p: FrameItem<M>, emit: boolean) => {
      inFlight--;
      if (emit) subscriber.next(p);
      startWaiting();
      finishIfDone();
    };
    const start = (p: FrameItem<M>) => {
      inFlight++;
      attempt(p, encode(p), 1);
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
      for (const r of retries) r.unsubscribe();
      const dropped = retries.size;
      retries.clear();
      inFlight -= dropped;
      startWaiting();
      finishIfDone();
    });
    const upstream = source.subscribe({
      next: (p) => {
        if (p.kind !== 'frame') return subscriber.next(p);
        if (inFlight < concurrency && head === waiting.length) start(p);
        else waiting.push(p);
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
      for (const r of retries) r.unsubscribe();
    };
  });
}
