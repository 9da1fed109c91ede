/**
 * PointSink keeping points in an array: for unit tests and replay-to-memory. Applies the same
 * rules as the other sinks (non-finite fields dropped, a point with no finite field skipped), so
 * tests against it see what a database would hold.
 */
import { lineBlockText, type LineBlock, type Point, type PointSink } from '../model/point.js';
import { decodeLines } from './lineproto/decode.js';

/** Copy of `point` without its non-finite fields, or null when none is left. */
function finitePart(point: Point): Point | null {
  const fields: Record<string, number> = {};
  let any = false;
  for (const [key, value] of Object.entries(point.fields)) {
    if (Number.isFinite(value)) {
      fields[key] = value;
      any = true;
    }
  }
  return any && Number.isFinite(point.timeMs) ? { measurement: point.measurement, tags: { ...point.tags }, fields, timeMs: point.timeMs } : null;
}

/** In-memory sink. `points` grows with every write (copies, in write order); `close` only marks it closed. */
export class MemorySink implements PointSink {
  /** Every written point, in order. Mutated by `write`. */
  readonly points: Point[] = [];
  closed = false;

  async write(points: readonly Point[]): Promise<void> {
    if (this.closed) throw new Error('memory sink: write after close');
    for (const point of points) {
      const kept = finitePart(point);
      if (kept !== null) this.points.push(kept);
    }
  }

  /** Lines are decoded back, so the points are what a database would hold (rounding included). */
  async writeLines(block: LineBlock): Promise<void> {
    if (this.closed) throw new Error('memory sink: write after close');
    for (const point of decodeLines(lineBlockText(block))) this.points.push(point);
  }

  async close(): Promise<void> {
    this.closed = true;
  }
}
