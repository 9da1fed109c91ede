import type { DeadLetter, Rejection } from '../../model/rejection.js';
import type { DeadLetterSink } from './sink.js';

export type RejectionCode = Rejection['code'];

/** Totals kept by the fan-out. Mutated in place on every write. */
export interface DeadLetterCounts {
  /** Dead letters written (one per refused message). */
  messages: number;
  /** Rejections by code (a message may carry several). */
  byCode: Partial<Record<RejectionCode, number>>;
  /** Sink writes that failed, by sink index. */
  failuresBySink: number[];
}

/**
 * Writes every dead letter to all sinks at once and counts them per rejection code.
 * Resolves when every sink has the record; rejects (after all settle) if any sink failed,
 * so the caller does not acknowledge a message whose record may be lost.
 */
export class DeadLetterFanOut implements DeadLetterSink {
  readonly counts: DeadLetterCounts;

  constructor(private readonly sinks: readonly DeadLetterSink[]) {
    this.counts = { messages: 0, byCode: {}, failuresBySink: sinks.map(() => 0) };
  }

  async write(deadLetter: DeadLetter): Promise<void> {
    this.counts.messages++;
    for (const r of deadLetter.rejections) this.counts.byCode[r.code] = (this.counts.byCode[r.code] ?? 0) + 1;
    const results = await Promise.allSettled(this.sinks.map((s) => s.write(deadLetter)));
    const failed = results.flatMap((r, i) => (r.status === 'rejected' ? [{ i, reason: r.reason as unknown }] : []));
    for (const f of failed) this.counts.failuresBySink[f.i]++;
    if (failed.length > 0) {
      throw new AggregateError(failed.map((f) => f.reason), `dead letter not recorded by ${failed.length} of ${this.sinks.length} sinks`);
    }
  }
}
