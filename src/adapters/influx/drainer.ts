/**
 * Background writer of the spool: takes the oldest segment, writes it in ONE request (so a segment
 * is written entirely or not at all), removes it, and goes on until the spool is empty. On failure
 * it waits the back-off (doubling up to `maxRetryDelay_ms`) and tries the same segment again.
 * A crash between the database's 204 and the removal sends that one segment again on restart.
 */
import type { Spool } from '../spool/spool.js';
import { backoffDelay_ms, cancellableSleep } from './backoff.js';
import { DatabaseWriteError } from './post-lines.js';
import type { RetryPolicy } from './send-with-retry.js';

export interface DrainerDeps {
  spool: Spool;
  retry: RetryPolicy;
  post: (lines: readonly string[]) => Promise<void>;
  onWritten: (points: number) => void;
  onFailed: (err: DatabaseWriteError) => void;
  /** A segment the database refuses for its content: set it aside so the drain goes on. */
  onRefused: (lines: readonly string[]) => Promise<void>;
}

/** Drains the spool in order; `kick` starts it (idempotent), `stop` ends it after the current request. */
export class SpoolDrainer {
  running = false;
  private stopped = false;
  private loop: Promise<void> = Promise.resolve();
  private sleep: { cancel(): void } | null = null;

  constructor(private readonly deps: DrainerDeps) {}

  kick(): void {
    if (this.running || this.stopped) return;
    this.running = true;
    this.loop = this.run().finally(() => {
      this.running = false;
      // An append may have landed between the last empty check and here.
      if (!this.deps.spool.isEmpty()) this.kick();
    });
  }

  async stop(): Promise<void> {
    this.stopped = true;
    this.sleep?.cancel();
    await this.loop;
  }

  private async run(): Promise<void> {
    const { spool } = this.deps;
    let attempt = 0;
    while (!this.stopped) {
      const segment = await spool.takeOldest();
      if (segment === null) return;
      try {
        await this.deps.post(segment.lines);
        this.deps.onWritten(segment.lines.length);
      } catch (err) {
        const failure = err instanceof DatabaseWriteError ? err : new DatabaseWriteError(String(err), null, true);
        if (failure.retryable) {
          this.deps.onFailed(failure);
          attempt += 1;
          const sleep = cancellableSleep(backoffDelay_ms(attempt, this.deps.retry.minRetryDelay_ms, this.deps.retry.maxRetryDelay_ms));
          this.sleep = sleep;
          await sleep.done;
          this.sleep = null;
          continue;
        }
        this.deps.onFailed(failure);
        await this.deps.onRefused(segment.lines);
      }
      attempt = 0;
      await spool.remove(segment.id);
    }
  }
}
