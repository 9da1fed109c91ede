import type { WriteOutcome } from '../pipeline/write-and-ack.js';

/** What one logger has had written, durably: its frames and results, and its newest frame's time. */
export interface LoggerWritten {
  frames: number;
  results: number;
  /** The logger's own timestamp of the newest frame written, epoch ms. */
  newestTimeMs: number;
}

/**
 * Counts the write stage's outcomes, keyed per logger: frames and results acknowledged after their
 * write (durable in the database, the spool or the files), and the newest logger time among them,
 * which against the wall clock is how far the stored results lag behind the structure. A frame
 * whose last attempt failed is not counted: it is not written, the broker delivers it again.
 */
export class WriteTally {
  readonly byLogger = new Map<string, LoggerWritten>();
  frames = 0;
  results = 0;

  note(outcome: WriteOutcome<unknown>): void {
    // A block of the storage stage (summaries, a window) is no frame of a logger.
    if (!outcome.acknowledged || outcome.loggerId === null) return;
    this.frames++;
    this.results += outcome.results;
    const seen = this.byLogger.get(outcome.loggerId);
    if (seen === undefined) {
      this.byLogger.set(outcome.loggerId, { frames: 1, results: outcome.results, newestTimeMs: outcome.timeMs });
      return;
    }
    seen.frames++;
    seen.results += outcome.results;
    // Writes finish out of order (batches in flight): the newest time, not the last one.
    if (outcome.timeMs > seen.newestTimeMs) seen.newestTimeMs = outcome.timeMs;
  }
}
