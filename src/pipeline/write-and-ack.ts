import { mergeMap, of, type OperatorFunction } from 'rxjs';
import type { PointSink } from '../model/point.js';
import type { ProcessedFrame } from './frame-processor.js';
import type { FrameOutput } from './process-frames.js';
import { framePoints, type PointOptions } from './to-points.js';

/** Anything that can be acknowledged once its results are safe. */
export interface Acknowledgeable {
  ack(): void;
}

/**
 * Writes each processed frame's points and acknowledges its message only after the sink says they
 * are durable (database or spool), so a crash in between makes the broker redeliver, not lose.
 * Up to `concurrency` frames are in flight, which lets the sink batch them. A write that fails
 * (spool full under the `block` policy) leaves the message unacknowledged and is reported, the
 * stream goes on; the broker's persistent session keeps the message.
 */
export function writeAndAck<M extends Acknowledgeable>(
  sink: PointSink, options: PointOptions = {}, concurrency = 2048, onWriteError: (err: unknown, p: ProcessedFrame<M>) => void = () => {},
): OperatorFunction<FrameOutput<M>, FrameOutput<M>> {
  return mergeMap((p) => {
    if (p.kind !== 'frame') return of(p);
    return sink.write(framePoints(p, options)).then(
      () => { p.message.ack(); return p; },
      (err: unknown) => { onWriteError(err, p); return p; },
    );
  }, concurrency);
}
