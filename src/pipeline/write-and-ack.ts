import { asyncScheduler, catchError, defer, map, mergeMap, of, retry, takeUntil, timer, type Observable, type OperatorFunction, type SchedulerLike } from 'rxjs';
import type { LineWriter } from '../model/point.js';
import type { ProcessedFrame } from './frame-processor.js';
import type { FrameOutput } from './process-frames.js';
import { frameLineEncoder, type FrameLineOptions } from './frame-lines.js';

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
 * Writes each processed frame's points and acknowledges its message only after the sink says they
 * are durable (database or spool), so a crash in between makes the broker redeliver, not lose.
 * Up to `concurrency` frames are in flight, which lets the sink batch them. A failed write (spool
 * full under the `block` policy) is reported and tried again with backoff; the message stays
 * unacknowledged meanwhile, and the connection's back-pressure holds the broker back. After the
 * last attempt the frame passes on unacknowledged (the broker redelivers it after a reconnect).
 */
export function writeAndAck<M extends Acknowledgeable>(
  sink: LineWriter, options: FrameLineOptions = {}, concurrency = 2048,
  onWriteError: (err: unknown, p: ProcessedFrame<M>) => void = () => {}, retryPolicy: WriteRetry = NO_RETRY,
): OperatorFunction<FrameOutput<M>, FrameOutput<M>> {
  const scheduler = retryPolicy.scheduler ?? asyncScheduler;
  // One encoder per subscription: it keeps the prepared names of the series it has seen.
  return (source) => defer(() => {
    const encode = frameLineEncoder(options);
    return source.pipe(mergeMap((p) => {
      if (p.kind !== 'frame') return of(p);
      const block = encode(p);
      return defer(() => sink.writeLines(block)).pipe(
        retry({
          count: retryPolicy.maxAttempts - 1,
          delay: (err: unknown, attempt: number) => {
            onWriteError(err, p);
            const wait = timer(Math.min(retryPolicy.initialDelayMs * 2 ** (attempt - 1), retryPolicy.maxDelayMs), scheduler);
            return retryPolicy.until ? wait.pipe(takeUntil(retryPolicy.until)) : wait;
          },
        }),
        map(() => { p.message.ack(); return p; }),
        catchError((err: unknown) => { onWriteError(err, p); return of(p); }),
      );
    }, concurrency));
  });
}
