import { Observable } from 'rxjs';
import type { RawMessage } from '../model/raw-message.js';
import type { PipelineInput, PipelineMessage } from '../pipeline/pipeline.js';

export interface ReplaySourceOptions {
  /** Clock ticks are synthesised on this grid of arrival time, as the live processor ticked. */
  tickMs: number;
  /** 0 = as fast as possible; otherwise arrival gaps are divided by this factor. */
  speed: number;
  sleep: (ms: number) => Promise<void>;
  /** Called after each message with the running count. */
  onMessage?: (count: number, raw: RawMessage) => void;
  /**
   * Asked before each message: a promise to wait for before reading on (the writes are behind),
   * or null to go on. A capture reads faster than results are written; without it the writes
   * waiting would grow with the length of the capture.
   */
  hold?: () => Promise<void> | null;
}

/** A replayed message: acknowledging it does nothing (the capture is not a broker). */
class ReplayedMessage implements PipelineMessage {
  constructor(readonly raw: RawMessage) {}
  ack(): void {}
}

/**
 * Turns a capture (messages in arrival order) into the pipeline's input stream: the messages, and
 * ticks at every tickMs boundary of arrival time crossed, so waits, no-data detection and
 * escalation happen at the same data times whatever the replay speed.
 */
export function replaySource(messages: AsyncIterable<RawMessage>, o: ReplaySourceOptions): Observable<PipelineInput<PipelineMessage>> {
  return new Observable((subscriber) => {
    let cancelled = false;
    (async () => {
      let nextTick = Number.NaN;
      let previousArrival = Number.NaN;
      let count = 0;
      for await (const raw of messages) {
        if (cancelled) return;
        const wait = o.hold?.();
        if (wait) await wait;
        if (cancelled) return;
        if (o.speed > 0 && previousArrival === previousArrival && raw.arrivalMs > previousArrival) {
          await o.sleep((raw.arrivalMs - previousArrival) / o.speed);
        }
        previousArrival = raw.arrivalMs;
        if (!(nextTick === nextTick)) nextTick = Math.floor(raw.arrivalMs / o.tickMs) * o.tickMs + o.tickMs;
        while (nextTick <= raw.arrivalMs) {
          subscriber.next({ kind: 'tick', nowMs: nextTick });
          nextTick += o.tickMs;
        }
        subscriber.next({ kind: 'message', message: new ReplayedMessage(raw) });
        o.onMessage?.(++count, raw);
      }
      subscriber.complete();
    })().catch((err) => subscriber.error(err));
    return () => { cancelled = true; };
  });
}
