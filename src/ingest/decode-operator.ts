import { Observable, type OperatorFunction } from 'rxjs';
import type { ChannelDirectory } from '../model/channel-directory.js';
import type { LoggerFrame, RawMessage } from '../model/raw-message.js';
import type { DeadLetter } from '../model/rejection.js';
import { decodeMessage } from './decode.js';
import type { TopicPattern } from './topic.js';

/** Running totals of the decode stage. Mutated in place by `decodeFrames`. */
export interface DecodeCounts {
  accepted: number;
  rejected: number;
  /** Dead-letter handler calls that threw or whose promise rejected (the record may be lost). */
  deadLetterFailures: number;
}

export function newDecodeCounts(): DecodeCounts {
  return { accepted: 0, rejected: 0, deadLetterFailures: 0 };
}

/** A decoded frame with the inbound message it came from (to acknowledge it once stored). */
export interface DecodedFrame<M> {
  frame: LoggerFrame;
  message: M;
}

/**
 * Called with every refused message. The handler owns the message from then on (acknowledge it
 * once the dead letter is recorded). It may return a promise; a throw or a rejection is counted
 * in `deadLetterFailures`, passed to `onHandlerError` when given, and never errors the stream.
 */
export type DeadLetterHandler<M> = (deadLetter: DeadLetter, message: M) => void | Promise<unknown>;

/**
 * Decode inbound messages into frames; refused ones go to `onDeadLetter`, not downstream.
 * Mutates `counts`. Never errors because of a payload: source errors and completion pass through.
 */
export function decodeFrames<M extends { raw: RawMessage }>(
  directory: ChannelDirectory,
  pattern: TopicPattern,
  onDeadLetter: DeadLetterHandler<M>,
  counts: DecodeCounts = newDecodeCounts(),
  onHandlerError: (error: unknown) => void = () => {},
): OperatorFunction<M, DecodedFrame<M>> {
  const handlerFailed = (error: unknown) => {
    counts.deadLetterFailures++;
    try {
      onHandlerError(error);
    } catch {
      // a failing error reporter must not stop ingest either
    }
  };
  return (source) =>
    new Observable<DecodedFrame<M>>((subscriber) =>
      source.subscribe({
        next(message) {
          const result = decodeMessage(message.raw, directory, pattern);
          if (result.ok) {
            counts.accepted++;
            subscriber.next({ frame: result.frame, message });
            return;
          }
          counts.rejected++;
          try {
            const pending = onDeadLetter(result.deadLetter, message);
            if (pending && typeof (pending as Promise<unknown>).then === 'function') {
              (pending as Promise<unknown>).then(undefined, handlerFailed);
            }
          } catch (error) {
            handlerFailed(error);
          }
        },
        error: (e) => subscriber.error(e),
        complete: () => subscriber.complete(),
      }),
    );
}
