import type { LineBlock, Point, PointSink } from '../model/point.js';

/** A sink that keeps nothing: for a run whose results only feed something else (a report's comparison run). */
export class DiscardSink implements PointSink {
  points = 0;
  async write(points: readonly Point[]): Promise<void> { this.points += points.length; }
  async writeLines(_block: LineBlock): Promise<void> {}
  async close(): Promise<void> {}
}
