/**
 * No-data watchdog arithmetic. A logger (or channel) is silent once nothing usable has arrived
 * for missing_after_intervals x its expected interval. Pure.
 */
export function silenceLimitMs(expectedIntervalS: number, missingAfterIntervals: number): number {
  return expectedIntervalS * missingAfterIntervals * 1000;
}

/** Silence in seconds at nowMs since lastMs, and whether it reached the limit. */
export function silence(nowMs: number, lastMs: number, limitMs: number): { silentS: number; silent: boolean } {
  const silentMs = Math.max(0, nowMs - lastMs);
  return { silentS: silentMs / 1000, silent: silentMs >= limitMs };
}
