import type { SchedulerLike, Subscription } from 'rxjs';

/** A log line's event name and details (the live job's `log`). */
export type LogLine = (event: string, detail?: Record<string, unknown>) => void;

export interface FailureSummary {
  /** One more failure with its reason. */
  note(reason: string): void;
  /** Logs what is still unsummarised and stops the timer. */
  stop(): void;
}

/**
 * Rate-limited log of a repeated failure (a write failing for every frame on a full spool): the
 * first failure after a quiet interval is logged at once with its reason, the rest as one line per
 * `every_ms` with their count and the first reason of the interval. Time from the scheduler.
 */
export function failureSummary(log: LogLine, event: string, every_ms: number, scheduler: SchedulerLike): FailureSummary {
  let count = 0;
  let firstReason: string | null = null;
  let timer: Subscription | null = null;
  const summarise = (): void => {
    if (count > 0) log(event, { failures: count, over_s: every_ms / 1000, first_reason: firstReason });
    const quiet = count === 0;
    count = 0;
    firstReason = null;
    timer = quiet ? null : scheduler.schedule(summarise, every_ms);
  };
  return {
    note(reason) {
      if (timer === null) {
        log(event, { failures: 1, reason });
        timer = scheduler.schedule(summarise, every_ms);
        return;
      }
      count++;
      firstReason ??= reason;
    },
    stop() {
      timer?.unsubscribe();
      timer = null;
      if (count > 0) log(event, { failures: count, over_s: every_ms / 1000, first_reason: firstReason });
      count = 0;
    },
  };
}
