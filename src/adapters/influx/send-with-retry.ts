/** Retry of one database write with exponential back-off. */
import { backoffDelay_ms, cancellableSleep } from './backoff.js';
import { DatabaseWriteError } from './post-lines.js';

/** How often and how patiently a batch is retried before it goes to the spool. */
export interface RetryPolicy {
  /** Retries after the first failed attempt (0 = spool at the first failure). */
  maxRetries: number;
  /** First back-off delay (ms); doubles per attempt. */
  minRetryDelay_ms: number;
  /** Back-off cap (ms), also the drainer's longest wait between probes. */
  maxRetryDelay_ms: number;
}

/**
 * Runs `send` up to 1 + maxRetries times, waiting the back-off between attempts; `onFailure` sees
 * every failed attempt. A non-retryable DatabaseWriteError is thrown at once. Throws the last error.
 */
export async function sendWithRetry(send: () => Promise<void>, policy: RetryPolicy, onFailure: (err: DatabaseWriteError) => void): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await send();
      return;
    } catch (err) {
      const failure = err instanceof DatabaseWriteError ? err : new DatabaseWriteError(String(err), null, true);
      onFailure(failure);
      if (!failure.retryable || attempt > policy.maxRetries) throw failure;
      await cancellableSleep(backoffDelay_ms(attempt, policy.minRetryDelay_ms, policy.maxRetryDelay_ms)).done;
    }
  }
}
