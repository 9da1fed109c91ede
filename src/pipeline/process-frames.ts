import { Observable, type OperatorFunction } from 'rxjs';
import type { CompiledStructure } from '../config/compile.js';
import type { LoggerFrame } from '../model/raw-message.js';
import type { Rejection } from '../model/rejection.js';
import { FrameProcessor, type ProcessedFrame } from './frame-processor.js';

/** What the processing stage takes: decoded frames, ticks that advance the pipeline clock, refusals. */
export type FrameInput<M> = { kind: 'frame'; frame: LoggerFrame; message: M } | PipelineTick | RefusedMessageOutput;

/**
 * A configured logger's message that the decoder refused (already dead-lettered and acknowledged):
 * passed through untouched, as evidence about the logger for instrument health (a scan dated ahead
 * of the processor's clock raises its clock alarm). Never data: it reaches no result.
 */
export interface RefusedMessageOutput {
  kind: 'refused';
  loggerId: string;
  /** The logger's timestamp when readable, epoch ms; else null. */
  timeMs: number | null;
  arrivalMs: number;
  codes: Rejection['code'][];
}

export interface PipelineTick {
  kind: 'tick';
  /** Pipeline clock, epoch ms (the injected clock live; derived from arrival times in replay). */
  nowMs: number;
}

/**
 * What it gives, in order: each frame as it is received (instrument health needs it at once, even
 * while its results wait for temperature), each frame once computed, and the ticks.
 */
export type FrameOutput<M> = ({ kind: 'frame' } & ProcessedFrame<M>) | ReceivedFrame | PipelineTick | RefusedMessageOutput;

export interface ReceivedFrame {
  kind: 'received';
  frame: LoggerFrame;
}

/**
 * RxJS stage around FrameProcessor: joins temperatures, reduces groups, computes stresses. The
 * pipeline clock is the latest arrival time or tick seen, so the same inputs give the same outputs
 * live and in replay. On completion, frames still waiting for temperature are computed.
 * Pass a processor to read its counters; by default one is made per subscription.
 */
export function processFrames<M>(
  structure: CompiledStructure, makeProcessor: () => FrameProcessor<M> = () => new FrameProcessor<M>(structure),
): OperatorFunction<FrameInput<M>, FrameOutput<M>> {
  return (source) => new Observable<FrameOutput<M>>((subscriber) => {
    const processor = makeProcessor();
    let clockMs = Number.NEGATIVE_INFINITY;
    const emit = (frames: ProcessedFrame<M>[]) => { for (const f of frames) subscriber.next({ kind: 'frame', ...f }); };
    return source.subscribe({
      next(input) {
        if (input.kind === 'refused') {
          subscriber.next(input);
          return;
        }
        if (input.kind === 'tick') {
          clockMs = Math.max(clockMs, input.nowMs);
          emit(processor.onTick(clockMs));
          subscriber.next(input);
          return;
        }
        clockMs = Math.max(clockMs, input.frame.arrivalMs);
        subscriber.next({ kind: 'received', frame: input.frame });
        emit(processor.onFrame(input.frame, input.message, clockMs));
      },
      error: (e) => subscriber.error(e),
      complete: () => {
        emit(processor.flush());
        subscriber.complete();
      },
    });
  });
}
