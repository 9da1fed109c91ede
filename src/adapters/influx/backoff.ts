/**
 * Exponential back-off: attempt 1 waits `min_ms`, each further attempt doubles, capped at `max_ms`.
 * Deterministic (no jitter): one sink per process, so there is no herd to spread. Pure.
 */
export function backoffDelay_ms(attempt: number, min_ms: number, max_ms: number): number {
  const exponent = Math.max(0, Math.min(attempt - 1, 30));
  return Math.min(max_ms, min_ms * 2 ** exponent);
}

/** A sleep that `cancel()` ends early (used so `close()` does not wait out a long back-off). */
export function cancellableSleep(ms: number): { done: Promise<void>; cancel(): void } {
  let cancel: () => void = () => undefined;
  const done = new Promise<void>((resolve) => {
    const timer = setTimeout(resolve, ms);
    cancel = () => {
      clearTimeout(timer);
      resolve();
    };
  });
  return { done, cancel };
}
