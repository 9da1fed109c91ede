import type { CaptureIndexEntry } from './capture-index.js';

/** How much capture to keep. Either limit may be absent. */
export interface CaptureRetention {
  /** Delete closed files whose last message is older than this, hours. */
  maxAge_h?: number;
  /** Delete the oldest closed files while all files together exceed this, bytes. */
  maxBytes?: number;
}

/**
 * Which files to delete, oldest first. Pure. Only closed files are candidates (never the one being
 * written). `entries` must be in time order.
 */
export function filesBeyondRetention(entries: readonly CaptureIndexEntry[], retention: CaptureRetention, nowMs: number): string[] {
  const doomed = new Set<string>();
  if (retention.maxAge_h !== undefined) {
    const cutoff = nowMs - retention.maxAge_h * 3_600_000;
    for (const e of entries) if (e.closed && e.lastArrivalMs < cutoff) doomed.add(e.name);
  }
  if (retention.maxBytes !== undefined) {
    let total = entries.reduce((sum, e) => sum + (doomed.has(e.name) ? 0 : e.bytes), 0);
    for (const e of entries) {
      if (total <= retention.maxBytes) break;
      if (!e.closed || doomed.has(e.name)) continue;
      doomed.add(e.name);
      total -= e.bytes;
    }
  }
  return entries.filter((e) => doomed.has(e.name)).map((e) => e.name);
}
