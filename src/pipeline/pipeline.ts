import { Observable, share, type OperatorFunction } from 'rxjs';
import type { CompiledStructure } from '../config/compile.js';
import { DEFAULT_MAX_FUTURE_MS, decodeMessage } from '../ingest/decode.js';
import { newDecodeCounts, type DecodeCounts } from '../ingest/decode-operator.js';
import type { TopicPattern } from '../ingest/topic.js';
import type { RawMessage } from '../model/raw-message.js';
import type { DeadLetterSink } from '../adapters/deadletter/sink.js';
import { FrameProcessor } from './frame-processor.js';
import { processFrames, type FrameInput, type FrameOutput, type PipelineTick } from './process-frames.js';

/** A received message: its bytes, and how to acknowledge it once its results are safe. */
export interface PipelineMessage {
  raw: RawMessage;
  ack(): void;
}

/** The single input stream of the pipeline, live and in replay: messages and clock ticks, in order. */
export type PipelineInput<M extends PipelineMessage> = { kind: 'message'; message: M } | PipelineTick;

export interface PipelineDeps {
  structure: CompiledStructure;
  topicPattern: TopicPattern;
  deadLetters: DeadLetterSink;
  /** Every message as received, before decoding (the raw capture). Must not throw. */
  record?: (raw: RawMessage) => void;
  /** Mutated in place: accepted, rejected, dead-letter failures. */
  decodeCounts?: DecodeCounts;
  /** The frame processor (pass one to read its counters). */
  processor?: FrameProcessor<unknown>;
  onDeadLetterError?: (err: unknown) => void;
  /** Largest logger time ahead of arrival accepted, ms (`ingest.max_future_s`); default DEFAULT_MAX_FUTURE_MS. */
  maxFutureMs?: number;
}

/**
 * The processing chain shared by live and replay: record, decode (refusals to the dead-letter
 * record, then acknowledged), join temperatures, reduce groups, compute stresses. The output is
 * shared: the write-and-acknowledge stage and the alarms both subscribe to it.
 */
export function pipeline<M extends PipelineMessage>(deps: PipelineDeps): OperatorFunction<PipelineInput<M>, FrameOutput<M>> {
  const counts = deps.decodeCounts ?? newDecodeCounts();
  const processor = (deps.processor as FrameProcessor<M> | undefined) ?? new FrameProcessor<M>(deps.structure);
  return (source) => source.pipe(
    decodeInputs<M>(deps, counts),
    processFrames<M>(deps.structure, () => processor),
    share(),
  );
}

/** Decodes messages into frames; ticks pass through. A refused message never reaches downstream. */
function decodeInputs<M extends PipelineMessage>(deps: PipelineDeps, counts: DecodeCounts): OperatorFunction<PipelineInput<M>, FrameInput<M>> {
  const failed = (err: unknown) => {
    counts.deadLetterFailures++;
    try { deps.onDeadLetterError?.(err); } catch { /* a failing reporter must not stop ingest */ }
  };
  const limits = { maxFutureMs: deps.maxFutureMs ?? DEFAULT_MAX_FUTURE_MS };
  return (source) => new Observable<FrameInput<M>>((subscriber) => source.subscribe({
    next(input) {
      if (input.kind === 'tick') return subscriber.next(input);
      const { message } = input;
      try { deps.record?.(message.raw); } catch (err) { failed(err); }
      const r = decodeMessage(message.raw, deps.structure.directory, deps.topicPattern, limits);
      if (r.ok) {
        counts.accepted++;
        subscriber.next({ kind: 'frame', frame: r.frame, message });
        return;
      }
      counts.rejected++;
      if (r.loggerId !== null) {
        subscriber.next({
          kind: 'refused', loggerId: r.loggerId, timeMs: r.timeMs, arrivalMs: message.raw.arrivalMs,
          codes: r.deadLetter.rejections.map((x) => x.code),
        });
      }
      // Acknowledge once recorded; if the record fails, acknowledge anyway (counted): a poison
      // message redelivered forever would block the session for every good message behind it.
      deps.deadLetters.write(r.deadLetter).catch(failed).finally(() => message.ack());
    },
    error: (e) => subscriber.error(e),
    complete: () => subscriber.complete(),
  }));
}
