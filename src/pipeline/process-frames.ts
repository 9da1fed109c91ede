import { Observable, type OperatorFunction } from 'rxjs';
import type { CompiledStructure } from '../config/compile.js';
import type { LoggerFrame } from '../model/raw-message.js';
import { FrameProcessor, type ProcessedFrame } from './frame-processor.js';

/** What the processing stage takes: decoded frames, and ticks that advance the pipeline clock. */
export type FrameInput<M> = { kind: 'frame'; frame: LoggerFrame; message: M } | PipelineTick;

export interface PipelineTick {
  kind: 'tick';
  /** Pipeline clock, epoch ms (the injected clock live; derived from arrival times in replay). */
  nowMs: number;
}

/**
 * What it gives, in order: each frame as it is received (instrument health needs it at once, even
 * while its results wait for temperature), each frame once computed, and the ticks.
 */
export type FrameOutput<M> = ({ kind: 'frame' } & ProcessedFrame<M>) | ReceivedFrame | PipelineTick;

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
